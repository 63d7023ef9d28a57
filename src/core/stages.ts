/** Sleep stages in AASM labels (Iber et al. 2007, AASM Manual), plus epochs without a usable score. */
export type Stage = 'W' | 'N1' | 'N2' | 'N3' | 'R' | 'unscored';

/** The scored stages in their conventional order (wake first, REM last). */
export const SCORED_STAGES: readonly Exclude<Stage, 'unscored'>[] = ['W', 'N1', 'N2', 'N3', 'R'];

/** All stage values, including 'unscored'. */
export const ALL_STAGES: readonly Stage[] = [...SCORED_STAGES, 'unscored'];

/** Stages that count as sleep for total sleep time (AASM: N1 + N2 + N3 + R). */
export const SLEEP_STAGES: readonly Stage[] = ['N1', 'N2', 'N3', 'R'];

export function isStage(value: string): value is Stage {
  return (ALL_STAGES as readonly string[]).includes(value);
}
