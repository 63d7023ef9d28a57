// Plot options for the cohort view's figures.
import * as Plot from '@observablehq/plot';
import { SCORED_STAGES } from '../../../core/stages.ts';
import type { Row } from '../../../queries/client.ts';
import type { GroupSize } from '../../../queries/cohort.ts';

/** Stage colours: wake grey, NREM from light to dark blue, REM a muted red. */
export const STAGE_COLORS: Record<string, string> = {
  W: '#b8b8b8',
  N1: '#a6c8e4',
  N2: '#5a8fc4',
  N3: '#23507f',
  R: '#c0615a',
};

export function groupSizePlot(sizes: readonly GroupSize[]): Plot.PlotOptions {
  return {
    height: 40 + 34 * sizes.length,
    marginLeft: 110,
    x: { label: 'subjects', grid: true, ticks: Math.min(10, Math.max(1, ...sizes.map((s) => s.subjects))), tickFormat: 'd' },
    y: { label: null },
    marks: [
      Plot.barX(sizes, { y: 'group', x: 'subjects', fill: '#5a8fc4' }),
      Plot.text(sizes, { y: 'group', x: 'subjects', text: (d: GroupSize) => String(d.subjects), dx: 10, textAnchor: 'start' }),
      Plot.ruleX([0]),
    ],
  };
}

const STAGE_KEYS: Record<string, string> = { W: 'w_min', N1: 'n1_min', N2: 'n2_min', N3: 'n3_min', R: 'r_min' };

/** Minutes per stage of each recording, stacked, one bar per recording. */
export function stageMinutesPlot(recordings: readonly Row[]): Plot.PlotOptions {
  const long = recordings
    .flatMap((r) =>
      SCORED_STAGES.map((stage) => ({
        recording: `${r.subject}${r.session ? ` ${r.session}` : ''}`,
        stage,
        minutes: (r[STAGE_KEYS[stage]] as number | null) ?? 0,
      })),
    )
    .filter((d) => d.minutes > 0);
  const bars = new Set(long.map((d) => d.recording)).size;
  return {
    height: 50 + 22 * bars,
    marginLeft: 110,
    x: { label: 'minutes', grid: true },
    y: { label: null },
    color: { domain: [...SCORED_STAGES], range: SCORED_STAGES.map((s) => STAGE_COLORS[s]), legend: 'ramp', label: 'stage' },
    marks: [Plot.barX(long, { y: 'recording', x: 'minutes', fill: 'stage', order: [...SCORED_STAGES] }), Plot.ruleX([0])],
  };
}
