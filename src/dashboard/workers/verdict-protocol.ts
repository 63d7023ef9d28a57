// Messages between the band check and robustness views and their worker (workers/verdict.worker.ts).
import type { ContrastData } from '../../core/contrast/data.ts';
import type { Contrast } from '../../core/contrast/spec.ts';
import type { Band } from '../../core/spectrum/bands.ts';
import type { BandCheckResult, PathChoices, PathDataSet, PathTest, SpecificationCurve } from '../../core/verdict/index.ts';

export type VerdictRequest =
  | { kind: 'band-check'; contrast: Contrast; band: Band; data: ContrastData; fitRangeHz: [number, number] }
  | { kind: 'paths'; contrast: Contrast; band: Band; choices: PathChoices; sets: PathDataSet[]; test: PathTest };

export type VerdictReply =
  | { kind: 'progress'; step: string; done: number; total: number }
  | { kind: 'band-check'; result: BandCheckResult; seconds: number }
  | { kind: 'paths'; result: SpecificationCurve; seconds: number }
  | { kind: 'error'; message: string };
