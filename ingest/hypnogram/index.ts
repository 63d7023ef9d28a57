export type { Hypnogram, ScoringOptions, ScoringProblem, ScoringWarning } from './types.ts';
export { ScoringError } from './types.ts';
export type { EdfAnnotation } from './annotations.ts';
export { scoringFromAnnotations } from './annotations.ts';
export type { EdfScoringOptions } from './edf.ts';
export { readScoringEdf, scoringFromOpenEdf } from './edf.ts';
export { readScoringTable, scoringFromTableText } from './table.ts';
export { readScoringText, scoringFromText } from './text.ts';
export { readScoring } from './read.ts';
