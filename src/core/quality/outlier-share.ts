import binomialCdf from '@stdlib/stats-base-dists-binomial-cdf';
import { MIN_OUTLIER_GROUP } from './epoch-rejection.ts';
import { outlierRate } from './outlier-limit.ts';
import { clampSeverity, QualityInputError, type Cell, type QualityRow } from './row.ts';

export interface OutlierShareOptions {
  /** The outlier rule's z0 (ingest option outlierZ, default 3.5): each rule's stated rate is 2Φ(−z0). */
  outlierZ: number;
  /** Flag when a rule's count is this improbable by chance (default 0.001; our choice: about one flag per thousand clean stages and rules). */
  alpha?: number;
}

export const DEFAULT_OUTLIER_SHARE_ALPHA = 0.001;

const RULES = ['muscle-outlier', 'broadband-outlier'] as const;

/**
 * Epochs one stage of one channel lost to the two outlier rules, against what the rules remove
 * by chance. Each rule removes a share p = 2Φ(−z0) of clean epochs under Gaussian scatter
 * (outlier-limit.ts), so its count k of the nJudged epochs it judged is compared with
 * X ~ Binomial(nJudged, p): tail P(X ≥ k) = 1 − F(k − 1) (@stdlib binomial CDF).
 * value = (muscle + broadband removals)/nJudged; flagged when either tail is below alpha;
 * severity = log P/log alpha of the smaller tail (1 at alpha). A flag says the rule removed more
 * than chance would: real artefacts, or a scatter the rule does not expect — it may be the rule,
 * not the data. nJudged < 5: the rule did not run (value null).
 */
export function outlierShare(cell: Cell, nJudged: number, rejectedByReason: Readonly<Record<string, number>>, options: OutlierShareOptions): QualityRow {
  if (!Number.isInteger(nJudged) || nJudged < 0) throw new QualityInputError(`invalid nJudged: ${nJudged}`);
  const alpha = options.alpha ?? DEFAULT_OUTLIER_SHARE_ALPHA;
  if (!(alpha > 0 && alpha < 1)) throw new QualityInputError(`invalid alpha: ${alpha}`);
  const base = { ...cell, metric: 'outlier-share' as const };
  if (nJudged < MIN_OUTLIER_GROUP) {
    return {
      ...base,
      value: null,
      flagged: false,
      reason: `only ${nJudged} epochs passed the time-domain checks: the outlier rules need ${MIN_OUTLIER_GROUP}`,
      severity: 0,
    };
  }
  const p = outlierRate(options.outlierZ);
  let removed = 0;
  let worst = { rule: '', k: 0, tail: 1 };
  for (const rule of RULES) {
    const k = rejectedByReason[rule] ?? 0;
    if (!Number.isInteger(k) || k < 0) throw new QualityInputError(`invalid count for reason ${rule}: ${k}`);
    removed += k;
    // P(X ≥ k) = 1 − F(k − 1; n, p)
    const tail = k === 0 ? 1 : Math.max(0, 1 - binomialCdf(k - 1, nJudged, p));
    if (tail < worst.tail) worst = { rule, k, tail };
  }
  if (removed > nJudged) throw new QualityInputError(`${removed} outlier removals out of ${nJudged} judged epochs`);
  const flagged = worst.tail < alpha;
  const reason = flagged
    ? `${worst.rule} removed ${worst.k} of ${nJudged} epochs where chance gives ${(p * nJudged).toPrecision(2)} (P = ${worst.tail.toPrecision(2)}): artefacts, or a spread the rule does not expect — it may be the rule, not the data`
    : null;
  const severity = worst.tail >= 1 ? 0 : clampSeverity(Math.log(Math.max(worst.tail, 1e-300)) / Math.log(alpha));
  return { ...base, value: removed / nJudged, flagged, reason, severity };
}
