import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { scoringFromAnnotations } from '../../ingest/hypnogram/annotations.ts';
import { readLabelMap } from '../../ingest/hypnogram/label-map.ts';
import { ScoringError } from '../../ingest/hypnogram/types.ts';

// The label-map file is our format (README, Formats): a TSV as BIDS tabular files are written
// (tab-separated, UTF-8, one header row; BIDS specification, "Tabular files") with the columns
// label and stage; stages are the AASM labels W, N1, N2, N3, R (Iber et al. 2007) or unscored.

const dir = mkdtempSync(path.join(tmpdir(), 'bw-hyp-map-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const file = (name: string, text: string) => {
  const p = path.join(dir, name);
  writeFileSync(p, text);
  return p;
};
function problems(f: () => unknown): string[] {
  try {
    f();
  } catch (e) {
    expect(e).toBeInstanceOf(ScoringError);
    return (e as ScoringError).problems.map((p) => p.message);
  }
  throw new Error('expected a ScoringError');
}

describe('readLabelMap', () => {
  it('reads label → stage rows; headers and stages in any case; extra columns ignored', () => {
    const map = readLabelMap(file('map.tsv', '\uFEFFLabel\tStage\tnote\r\nStadium 2\tN2\tx\r\nWach\tw\t\r\nArtefakt\tUNSCORED\t\r\n\r\nREM-Schlaf\tR\t\r\n'));
    expect(map).toEqual({ 'Stadium 2': 'N2', Wach: 'W', Artefakt: 'unscored', 'REM-Schlaf': 'R' });
    // used as the scoring's label map: matched ignoring case and white space, before the built-in labels
    const h = scoringFromAnnotations(
      [
        { onsetS: 0, durationS: 30, texts: ['wach'] },
        { onsetS: 30, durationS: 60, texts: ['STADIUM  2'] },
        { onsetS: 90, durationS: 30, texts: ['REM-Schlaf'] },
        { onsetS: 120, durationS: 30, texts: ['Artefakt'] },
      ],
      'night.edf',
      'annotations:night.edf',
      { labelMap: map, recordingDurationS: 150 },
    );
    expect(h.stages).toEqual(['W', 'N2', 'N2', 'R', 'unscored']);
    expect(h.warnings).toEqual([]);
  });

  it('reports every problem with its line: columns, stages, empty labels, ragged rows, conflicting rows', () => {
    expect(problems(() => readLabelMap(file('cols.tsv', 'text\tcode\nA\tW\n')))).toEqual([
      "label map: no 'label' column (header: text, code)",
      "label map: no 'stage' column (header: text, code)",
    ]);
    expect(problems(() => readLabelMap(file('bad.tsv', 'label\tstage\nA\tN4\n\tW\nB\tW\textra\nC\tN2\nc\tN3\nC \tN2\n')))).toEqual([
      "label map line 2: stage 'N4' is not one of W, N1, N2, N3, R, unscored",
      'label map line 3: empty label',
      'label map line 4 has 3 fields, the header has 2',
      "label map line 6: 'c' is the same label as 'C' (line 5), which maps to N2, not N3",
    ]);
    expect(problems(() => readLabelMap(path.join(dir, 'none.tsv')))[0]).toMatch(/cannot read the label map: ENOENT/);
  });
});
