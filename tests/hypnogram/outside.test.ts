import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { scoringFromAnnotations } from '../../ingest/hypnogram/annotations.ts';
import type { EdfAnnotation } from '../../ingest/hypnogram/annotations.ts';
import { ScoringError } from '../../ingest/hypnogram/types.ts';

// EDF+ (Kemp & Olivan 2003): annotations are onset (s), optional duration and free texts.
// AASM (Iber et al. 2007): 30-s epochs from the recording start. 'Sleep stage ?' and
// 'Movement time' are the unscored labels clinical exports write after the last sample
// (common practice). The rules for scoring outside the recording are ours (README, Formats).

const score = (annotations: EdfAnnotation[], options: Parameters<typeof scoringFromAnnotations>[3] = {}) =>
  scoringFromAnnotations(annotations, 'night.edf', 'annotations:night.edf', options);
const ann = (onsetS: number, durationS: number | null, text: string): EdfAnnotation => ({ onsetS, durationS, texts: [text] });
function scoringError(f: () => unknown): ScoringError {
  try {
    f();
  } catch (e) {
    expect(e).toBeInstanceOf(ScoringError);
    return e as ScoringError;
  }
  throw new Error('expected a ScoringError');
}
/** First 8 hex digits of SHA-256 (node:crypto), the short hash messages name a free text by. */
const hash8 = (text: string) => createHash('sha256').update(text, 'utf8').digest('hex').slice(0, 8);

describe('unscored labels outside the recording are trimmed with a warning', () => {
  it("trailing 'Sleep stage ?' and 'Movement time' past the end", () => {
    // 150-s recording = epochs 0–4; '?' covers epochs 4–5, 'Movement time' epoch 6.
    const h = score([ann(0, 120, 'Sleep stage 2'), ann(120, 60, 'Sleep stage ?'), ann(180, 30, 'Movement time')], { recordingDurationS: 150 });
    expect(h.stages).toEqual(['N2', 'N2', 'N2', 'N2', 'unscored']);
    expect(h.warnings.map((w) => [w.kind, w.epochs])).toEqual([['trimmed-unscored', [5, 6]]]);
    expect(h.warnings[0].message).toBe(
      "2 unscored epoch(s) past the recording end (150 s) trimmed at epochs 5–6 (150–210 s): 'Sleep stage ?' (annotation at 120 s), 'Movement time' (annotation at 180 s)",
    );
    expect(h.partial).toBe(false);
  });

  it('unscored labels before the recording start', () => {
    const h = score([ann(-60, 60, 'Sleep stage ?'), ann(0, 60, 'N2')], { recordingDurationS: 60 });
    expect(h.stages).toEqual(['N2', 'N2']);
    expect(h.warnings.map((w) => w.kind)).toEqual(['trimmed-unscored']);
    expect(h.warnings[0].message).toBe("2 unscored epoch(s) before the recording start (-60 to 0 s) trimmed: 'Sleep stage ?' (annotation at -60 s)");
  });
});

describe('scored stages outside the recording: refused by default, trimmed on request', () => {
  const anns = [ann(-30, 30, 'Sleep stage W'), ann(0, 90, 'Sleep stage 2'), ann(90, 60, 'Sleep stage R')];

  it('refuses scored epochs past the end or before the start, naming both and the option', () => {
    const e = scoringError(() => score(anns, { recordingDurationS: 120 }));
    expect(e.problems.map((p) => p.kind)).toEqual(['before-start', 'past-end']);
    expect(e.message).toContain("1 scored epoch(s) before the recording start (-30 to 0 s): 'Sleep stage W' (annotation at -30 s)");
    expect(e.message).toContain("scoring runs past the recording end (120 s) at epoch 4 (120–150 s): 'Sleep stage R' (annotation at 90 s)");
    expect(e.message).toContain('likely misaligned');
    expect(e.message).toContain('--trim-scoring');
    expect(e.epochs).toEqual([-1, 4]);
  });

  it('trims them with a warning that counts them', () => {
    const h = score(anns, { recordingDurationS: 120, trimScoredOutside: true });
    expect(h.stages).toEqual(['N2', 'N2', 'N2', 'R']);
    const w = h.warnings.filter((x) => x.kind === 'trimmed-scored');
    expect(w.map((x) => x.epochs)).toEqual([[-1], [4]]);
    expect(w[0].message).toBe("1 scored epoch(s) before the recording start (-30 to 0 s) trimmed: 'Sleep stage W' (annotation at -30 s)");
    expect(w[1].message).toBe("1 scored epoch(s) past the recording end (120 s) trimmed at epoch 4 (120–150 s): 'Sleep stage R' (annotation at 90 s)");
  });
});

describe('partial scoring: starts late, ends early, gaps', () => {
  it('names each with its own kind and flags the hypnogram partial', () => {
    // 240-s recording = 8 epochs; scored 60–120 s and 150–180 s.
    const h = score([ann(60, 60, 'N2'), ann(150, 30, 'R')], { recordingDurationS: 240 });
    expect(h.stages).toEqual(['unscored', 'unscored', 'N2', 'N2', 'unscored', 'R', 'unscored', 'unscored']);
    expect(h.partial).toBe(true);
    expect(h.warnings).toEqual([
      {
        kind: 'scoring-starts-late',
        epochs: [0, 1],
        message: 'scoring starts late: no scoring for epochs 0–1 (0–60 s) before the first scored epoch; set to unscored',
      },
      { kind: 'gap', epochs: [4], message: 'no scoring for epoch 4 (120–150 s): set to unscored' },
      {
        kind: 'scoring-ends-early',
        epochs: [6, 7],
        message: 'scoring ends early: no scoring for epochs 6–7 (180–240 s) after the last scored epoch; set to unscored',
      },
    ]);
  });

  it('an explicit unscored label is scoring, not a gap', () => {
    const h = score([ann(0, 30, 'Sleep stage ?'), ann(30, 30, 'N2')], { recordingDurationS: 60 });
    expect(h.stages).toEqual(['unscored', 'N2']);
    expect(h.partial).toBe(false);
    expect(h.warnings).toEqual([]);
  });
});

describe('messages never quote annotation free text', () => {
  // A fake identity typed into annotations (invented; no real person).
  const secret = 'Pt Quillfeather_Zebediah 29-FEB-1952';
  const secretStage = 'Stage Quillfeather_Zebediah';

  it('other events are named by onset and a short hash', () => {
    const h = score([ann(0, 60, 'N2'), ann(35, null, secret), ann(40, null, secret)], { recordingDurationS: 60 });
    const w = h.warnings.find((x) => x.kind === 'ignored-events')!;
    expect(w.epochs).toEqual([1]);
    expect(w.message).toBe(`text #${hash8(secret)} (not a stage label): 2 event(s) ignored at epoch 1 (30–60 s), first at 35 s`);
    expect(JSON.stringify(h)).not.toContain('Quillfeather');
  });

  it('unknown labels, overlaps, off-grid onsets and files without stages are named without their text', () => {
    const unknown = scoringError(() => score([ann(0, 30, 'N2'), ann(30, 30, secretStage)]));
    expect(unknown.message).toContain(`unknown stage label (text #${hash8(secretStage)}, annotation at 30 s) at epoch 1 (30–60 s)`);
    const off = scoringError(() => score([ann(15, 30, secretStage)], { unknownAs: 'unscored' }));
    expect(off.message).toContain(`text #${hash8(secretStage)} (annotation at 15 s): onset 15 s is not on the 30-s epoch grid`);
    const overlap = scoringError(() => score([ann(0, 60, 'N2'), ann(30, 30, secretStage)], { unknownAs: 'unscored' }));
    expect(overlap.message).toContain(`'N2' (annotation at 0 s) and text #${hash8(secretStage)} (annotation at 30 s)`);
    const none = scoringError(() => score([ann(0, null, secret)]));
    expect(none.message).toBe(`night.edf: scoring problem:\n  - no sleep-stage labels found (only other events: 1 event(s), 1 distinct text(s))`);
    const unscored = score([ann(0, 30, 'N2'), ann(30, 30, secretStage)], { unknownAs: 'unscored' });
    expect(unscored.warnings[0]).toMatchObject({ kind: 'unknown-label', epochs: [1] });
    for (const m of [unknown, off, overlap, none].map((e) => e.message).concat(unscored.warnings.map((w) => w.message))) {
      expect(m).not.toContain('Quillfeather');
    }
  });
});

describe('unscored labels whose duration is not whole epochs (exports end with a long "Sleep stage ?"; movement marked as an instant)', () => {
  it('cover the whole epochs inside them, with one warning naming them; nothing scored is changed', () => {
    // 300-s recording = epochs 0–9; '?' from 150 s for 45 s covers epoch 5 whole and half of 6, which N2 then scores
    const h = score([ann(0, 150, 'Sleep stage W'), ann(150, 45, 'Sleep stage ?'), ann(180, 120, 'Sleep stage 2')], { recordingDurationS: 300 });
    expect(h.stages).toEqual(['W', 'W', 'W', 'W', 'W', 'unscored', 'N2', 'N2', 'N2', 'N2']);
    expect(h.warnings.map((w) => [w.kind, w.epochs])).toEqual([['unscored-not-whole-epochs', [5]]]);
    expect(h.warnings[0].message).toBe(
      "1 unscored label(s) whose duration is not a whole number of 30-s epochs taken over the whole epochs inside them: 'Sleep stage ?' (annotation at 150 s)",
    );
  });

  it("a trailing 'Sleep stage ?' of any length past the end is trimmed, not refused", () => {
    const h = score([ann(0, 120, 'Sleep stage 2'), ann(120, 15931, 'Sleep stage ?')], { recordingDurationS: 150 });
    expect(h.stages).toEqual(['N2', 'N2', 'N2', 'N2', 'unscored']);
    expect(h.warnings.map((w) => w.kind)).toEqual(['trimmed-unscored', 'unscored-not-whole-epochs']);
  });

  it("'Movement time' of 0 s marks no epoch: kept as a note, the epoch keeps its stage", () => {
    const h = score([ann(0, 60, 'Sleep stage W'), ann(40, 0, 'Movement time'), ann(60, 30, 'Sleep stage 2')], { recordingDurationS: 90 });
    expect(h.stages).toEqual(['W', 'W', 'N2']);
    expect(h.warnings.map((w) => [w.kind, w.epochs])).toEqual([['unscored-not-whole-epochs', [1]]]);
  });

  it('a scored stage of a duration that is not whole epochs is still refused (it would shift what the epochs hold)', () => {
    const e = scoringError(() => score([ann(0, 60, 'Sleep stage W'), ann(60, 75, 'Sleep stage 2')], { recordingDurationS: 300 }));
    expect(e.message).toContain("'Sleep stage 2' (annotation at 60 s): duration 75 s from epoch 2 (60–90 s) is not a whole number of 30-s epochs");
  });
});
