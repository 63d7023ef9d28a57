/**
 * The cluster table of a compare result, one format for the dashboard's table (and its TSV export)
 * and the command line's --tsv: the same columns, the same rounded values, the channels front to
 * back (src/core/montage/channel-order.ts). A cluster of one point (one channel at one frequency
 * bin) with p above SINGLE_POINT_MAX_P is hidden unless asked for: such clusters are what the
 * cluster-forming threshold lets through by chance, and a long table of them hides the real ones.
 */
import { frontToBack } from '../montage/channel-order.ts';
import type { Position3 } from '../montage/positions.ts';
import { signText } from './labels.ts';
import type { Contrast } from './spec.ts';

/** One-point clusters with a p above this are hidden unless asked for (ours). */
export const SINGLE_POINT_MAX_P = 0.05;
/** Level a cluster is marked significant at. */
export const SIGNIFICANT_BELOW_P = 0.05;

export interface ClusterTableColumn {
  /** also the TSV header */
  key: string;
  /** header on screen (units in brackets) */
  label: string;
  /** decimals on screen */
  digits?: number;
}

export const CLUSTER_TABLE_COLUMNS: readonly ClusterTableColumn[] = [
  { key: 'cluster', label: 'Cluster' },
  { key: 'sign', label: 'Sign' },
  { key: 'direction', label: 'Direction' },
  { key: 'fmin_hz', label: 'From (Hz)' },
  { key: 'fmax_hz', label: 'To (Hz)' },
  { key: 'channels', label: 'Channels' },
  { key: 'mass', label: 'Mass (Σ t)', digits: 1 },
  { key: 'size', label: 'Points' },
  { key: 'p', label: 'p', digits: 4 },
  { key: 'significant', label: 'p < 0.05' },
];

export type ClusterTableRow = Record<string, string | number | boolean>;

export interface ClusterTable {
  rows: ClusterTableRow[];
  /** one-point clusters with p > SINGLE_POINT_MAX_P left out */
  hidden: number;
}

interface ClusterSource {
  contrast: Contrast;
  clusters: readonly { sign: number; mass: number; size: number; p: number; fminHz: number; fmaxHz: number; channels: readonly string[] }[];
  statistics: { channels: readonly string[] };
  channelLayout?: { positions: readonly (Position3 | null)[] };
}

/** x rounded to `digits` significant digits (a number, so a TSV reader sees a number). */
function significant(x: number, digits: number): number {
  return Number(x.toPrecision(digits));
}

/**
 * The table's rows, numbered as the result numbers its clusters (a hidden cluster keeps its
 * number's gap); mass to 4 decimals, p to 4 significant digits.
 */
export function clusterTable(r: ClusterSource, o: { singlePoints: boolean }): ClusterTable {
  const positions = new Map<string, Position3 | null>();
  r.statistics.channels.forEach((ch, i) => positions.set(ch, r.channelLayout?.positions[i] ?? null));
  const rows: ClusterTableRow[] = [];
  let hidden = 0;
  r.clusters.forEach((k, i) => {
    if (!o.singlePoints && k.size === 1 && k.p > SINGLE_POINT_MAX_P) {
      hidden++;
      return;
    }
    rows.push({
      cluster: i + 1,
      sign: k.sign,
      direction: signText(r.contrast, k.sign),
      fmin_hz: k.fminHz,
      fmax_hz: k.fmaxHz,
      channels: frontToBack(k.channels, (ch) => positions.get(ch)).join(' '),
      mass: Number(k.mass.toFixed(4)),
      size: k.size,
      p: significant(k.p, 4),
      significant: k.p < SIGNIFICANT_BELOW_P,
    });
  });
  return { rows, hidden };
}

/** The sentence under the table when one-point clusters are hidden. */
export function hiddenClustersNote(hidden: number): string {
  return hidden === 0
    ? ''
    : `${hidden} cluster${hidden === 1 ? '' : 's'} of a single point (one channel, one frequency bin) with p > ${SINGLE_POINT_MAX_P} ${hidden === 1 ? 'is' : 'are'} not listed.`;
}
