import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { scoringFromAnnotations } from '../../ingest/hypnogram/annotations.ts';
import type { EdfAnnotation } from '../../ingest/hypnogram/annotations.ts';
import { ScoringError } from '../../ingest/hypnogram/types.ts';

// EDF+ (Kemp & Olivan 2003): an annotation is onset (s from file start), optional duration and
// texts. AASM (Iber et al. 2007): 30-s epochs from the start of the recording.

function score(annotations: EdfAnnotation[], options: Parameters<typeof scoringFromAnnotations>[3] = {}) {
  return scoringFromAnnotations(annotations, 'night.edf', 'annotations:night.edf', options);
}
/** Messages name a text that is not a stage label by the first 8 hex digits of its SHA-256 (node:crypto). */
const hash8 = (text: string) => `text #${createHash('sha256').update(text, 'utf8').digest('hex').slice(0, 8)}`;
function scoringError(f: () => unknown): ScoringError {
  try {
    f();
  } catch (e) {
    expect(e).toBeInstanceOf(ScoringError);
    return e as ScoringError;
  }
  throw new Error('expected a ScoringError');
}

describe('scoring from EDF+ annotations', () => {
  it('fills the epochs an annotation spans, ignores other events with a warning, reports gaps', () => {
    const h = score(
      [
        { onsetS: 0, durationS: null, texts: ['Lights off'] },
        { onsetS: 0, durationS: 60, texts: ['Sleep stage W'] },
        { onsetS: 45, durationS: 3, texts: ['Arousal'] },
        { onsetS: 60, durationS: 30, texts: ['Sleep stage 1'] },
        { onsetS: 90, durationS: 90, texts: ['Sleep stage 2'] },
        { onsetS: 100, durationS: null, texts: [''] },
      ],
      { recordingDurationS: 210 },
    );
    expect(h.epochS).toBe(30);
    expect(h.source).toBe('annotations:night.edf');
    expect(h.stages).toEqual(['W', 'W', 'N1', 'N2', 'N2', 'N2', 'unscored']);
    const byKind = (k: string) => h.warnings.filter((w) => w.kind === k);
    // named by hash and onset, never by their text
    expect(byKind('ignored-events').map((w) => [w.epochs, w.message.startsWith(hash8('Lights off')) || w.message.startsWith(hash8('Arousal'))])).toEqual([
      [[0], true],
      [[1], true],
    ]);
    expect(byKind('scoring-ends-early')).toHaveLength(1);
    expect(byKind('scoring-ends-early')[0].epochs).toEqual([6]);
    expect(byKind('scoring-ends-early')[0].message).toContain('epoch 6 (180–210 s)');
    expect(h.partial).toBe(true);
  });

  it('rejects scoring whole epochs past the recording end, naming the epochs and label', () => {
    const e = scoringError(() =>
      score(
        [
          { onsetS: 0, durationS: 90, texts: ['N2'] },
          { onsetS: 90, durationS: 90, texts: ['N3'] },
        ],
        { recordingDurationS: 120 },
      ),
    );
    expect(e.file).toBe('night.edf');
    expect(e.epochs).toEqual([4, 5]);
    expect(e.message).toMatch(/past the recording end \(120 s\) at epochs 4–5 \(120–180 s\): 'N3'/);
    expect(e.problems.map((p) => p.kind)).toEqual(['past-end']);
  });

  it('drops only a partial last epoch, with a warning', () => {
    // 135 s = 4 whole epochs + 15 s: epoch 4 is partial.
    const h = score(
      [
        { onsetS: 0, durationS: 90, texts: ['N2'] },
        { onsetS: 90, durationS: 45, texts: ['R'] },
      ],
      { recordingDurationS: 135 },
    );
    expect(h.stages).toEqual(['N2', 'N2', 'N2', 'R']);
    const w = h.warnings.find((x) => x.kind === 'truncated');
    expect(w?.epochs).toEqual([4]);
    expect(w?.message).toMatch(/'R'.*partial last epoch 4 \(120–150 s\) is dropped/);
    // A full epoch beyond the partial one is still an error.
    const e = scoringError(() => score([{ onsetS: 90, durationS: 90, texts: ['R'] }], { recordingDurationS: 135 }));
    expect(e.epochs).toEqual([5]);
  });

  it('rejects overlaps naming the epochs and both labels', () => {
    const e = scoringError(() =>
      score([
        { onsetS: 0, durationS: 90, texts: ['Sleep stage 2'] },
        { onsetS: 60, durationS: 60, texts: ['Sleep stage 3'] },
      ]),
    );
    expect(e.epochs).toEqual([2]);
    // recognised stage labels may be shown
    expect(e.message).toContain("overlapping scoring at epoch 2 (60–90 s): 'Sleep stage 2' (annotation at 0 s) and 'Sleep stage 3' (annotation at 60 s)");
  });

  it('rejects onsets off the epoch grid and durations that are not whole epochs', () => {
    const e = scoringError(() =>
      score(
        [
          { onsetS: 45, durationS: 30, texts: ['N2'] },
          { onsetS: 90, durationS: 45, texts: ['N3'] },
        ],
        { recordingDurationS: 300 },
      ),
    );
    expect(e.problems.map((p) => p.kind)).toEqual(['off-grid', 'duration-off-grid']);
    expect(e.message).toContain("'N2' (annotation at 45 s): onset 45 s is not on the 30-s epoch grid (inside epoch 1 (30–60 s))");
    expect(e.message).toContain("'N3' (annotation at 90 s): duration 45 s from epoch 3 (90–120 s) is not a whole number of 30-s epochs");
    // Within the 100-µs annotation resolution of EDFlib an onset counts as on the grid; 1 ms off does not.
    expect(score([{ onsetS: 30.00005, durationS: 29.99995, texts: ['N2'] }]).stages).toEqual(['unscored', 'N2']);
    expect(scoringError(() => score([{ onsetS: 30.001, durationS: 30, texts: ['N2'] }])).problems[0].kind).toBe('off-grid');
    // 20-s epochs: 40 s is on the grid.
    expect(score([{ onsetS: 40, durationS: 20, texts: ['N2'] }], { epochS: 20 }).stages).toEqual(['unscored', 'unscored', 'N2']);
  });

  it('unknown stage labels: error naming label and epochs, unless mapped or unknownAs', () => {
    const anns = [
      { onsetS: 0, durationS: 30, texts: ['Sleep stage W'] },
      { onsetS: 30, durationS: 60, texts: ['Sleep stage X'] },
    ];
    const e = scoringError(() => score(anns));
    expect(e.epochs).toEqual([1]);
    expect(e.message).toContain(`unknown stage label (${hash8('Sleep stage X')}, annotation at 30 s) at epoch 1 (30–60 s)`);
    expect(e.message).not.toContain('Sleep stage X');
    const h = score(anns, { unknownAs: 'unscored' });
    expect(h.stages).toEqual(['W', 'unscored', 'unscored']);
    expect(h.warnings.find((w) => w.kind === 'unknown-label')?.message).toContain(hash8('Sleep stage X'));
    const mapped = score(anns, { labelMap: { 'sleep stage x': 'N2' } });
    expect(mapped.stages).toEqual(['W', 'N2', 'N2']);
    expect(mapped.warnings).toEqual([]);
  });

  it('collects several problems into one error and refuses a file without stages', () => {
    const e = scoringError(() =>
      score([
        { onsetS: 15, durationS: 30, texts: ['N2'] },
        { onsetS: 30, durationS: 30, texts: ['N7'] },
      ]),
    );
    expect(e.problems).toHaveLength(2);
    expect(e.message).toMatch(/2 scoring problems/);
    const none = scoringError(() => score([{ onsetS: 0, durationS: null, texts: ['Arousal'] }]));
    expect(none.message).toContain('no sleep-stage labels found (only other events: 1 event(s), 1 distinct text(s))');
    expect(scoringError(() => score([{ onsetS: 0, durationS: 30, texts: ['N2'] }], { epochS: 0 })).message).toMatch(/epoch length/);
    expect(scoringError(() => score([{ onsetS: Number.NaN, durationS: 30, texts: ['N2'] }])).message).toMatch(/onset NaN s is not a number of seconds/);
    expect(scoringError(() => score([{ onsetS: -30, durationS: 30, texts: ['N2'] }])).problems[0].kind).toBe('before-start');
  });
});
