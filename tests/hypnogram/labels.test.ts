import { describe, expect, it } from 'vitest';
import { looksLikeStageLabel, normalizeLabel, stageFromLabel, stageFromSignalCode } from '../../src/core/hypnogram/labels.ts';
import type { Stage } from '../../src/core/stages.ts';

describe('stage labels', () => {
  // AASM Manual (Iber et al. 2007): stages W, N1, N2, N3, R; older (4-stage) scoring maps
  // S1→N1, S2→N2, S3 and S4→N3, REM→R (also listed in shared/STANDARDS.md).
  const aasm: [string, Stage][] = [
    ['W', 'W'],
    ['N1', 'N1'],
    ['N2', 'N2'],
    ['N3', 'N3'],
    ['R', 'R'],
    ['Sleep stage W', 'W'],
    ['S1', 'N1'],
    ['1', 'N1'],
    ['Stage 1', 'N1'],
    ['S2', 'N2'],
    ['Stage 2', 'N2'],
    ['S3', 'N3'],
    ['S4', 'N3'],
    ['Stage 3', 'N3'],
    ['Stage 4', 'N3'],
    ['Sleep stage 4', 'N3'],
    ['REM', 'R'],
    ['Stage R', 'R'],
    ['Sleep stage R', 'R'],
    // movement / unknown → unscored (brief; common practice)
    ['movement', 'unscored'],
    ['Movement time', 'unscored'],
    ['unknown', 'unscored'],
    ['?', 'unscored'],
    ['M', 'unscored'],
    ['MT', 'unscored'],
    ['U', 'unscored'],
    ['Sleep stage ?', 'unscored'],
  ];
  it.each(aasm)('%s → %s', (label, stage) => {
    expect(stageFromLabel(label)).toBe(stage);
  });

  it('ignores case and white space', () => {
    expect(normalizeLabel(' Sleep  stage\tW ')).toBe('sleepstagew');
    expect(stageFromLabel('sleep stage w')).toBe('W');
    expect(stageFromLabel('SLEEPSTAGE4')).toBe('N3');
    expect(stageFromLabel(' rem ')).toBe('R');
    expect(stageFromLabel('n 2')).toBe('N2');
    expect(stageFromLabel('mt')).toBe('unscored');
  });

  it('maps the EDF+ hypnogram-as-signal codes W,1,2,3,4,R,M = 0..6 and 9 = unscored', () => {
    // EDF+ specification (Kemp & Olivan 2003), hypnogram stored as a signal.
    const expected: [number, Stage][] = [
      [0, 'W'],
      [1, 'N1'],
      [2, 'N2'],
      [3, 'N3'],
      [4, 'N3'],
      [5, 'R'],
      [6, 'unscored'],
      [9, 'unscored'],
    ];
    for (const [code, stage] of expected) {
      expect(stageFromSignalCode(code)).toBe(stage);
      expect(stageFromLabel(String(code))).toBe(stage);
    }
    expect(stageFromSignalCode(7)).toBeUndefined();
    expect(stageFromSignalCode(8)).toBeUndefined();
    expect(stageFromSignalCode(1.5)).toBeUndefined();
    expect(stageFromLabel('7')).toBeUndefined();
  });

  it('a user label map takes precedence over the built-in table, matched the same way', () => {
    expect(stageFromLabel('REM', { rem: 'unscored' })).toBe('unscored');
    expect(stageFromLabel('Light sleep', { 'LIGHT SLEEP': 'N1' })).toBe('N1');
    expect(stageFromLabel('N2', { 'Light sleep': 'N1' })).toBe('N2');
    expect(() => stageFromLabel('x', { x: 'N4' as Stage })).toThrow(/'x' maps to 'N4'/);
  });

  it('unknown labels are undefined; stage-like ones are recognised as such', () => {
    expect(stageFromLabel('Arousal')).toBeUndefined();
    expect(stageFromLabel('N4')).toBeUndefined();
    expect(looksLikeStageLabel('N4')).toBe(true);
    expect(looksLikeStageLabel('Sleep stage X')).toBe(true);
    expect(looksLikeStageLabel('Arousal')).toBe(false);
    expect(looksLikeStageLabel('Lights off')).toBe(false);
  });
});
