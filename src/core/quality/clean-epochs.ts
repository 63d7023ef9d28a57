import { clampSeverity, QualityInputError, type Cell, type QualityRow } from './row.ts';

export interface CleanEpochsOptions {
  /** Fewest clean epochs for a usable stage spectrum (default 20 = 10 min of 30-s epochs; our choice — pass the pipeline's own minimum). */
  minEpochs: number;
}

export const DEFAULT_CLEAN_EPOCHS: Readonly<CleanEpochsOptions> = { minEpochs: 20 };

/** Too few clean epochs in a stage: value = nClean; flagged below minEpochs; severity = minEpochs / nClean. */
export function cleanEpochs(cell: Cell, nClean: number, options: CleanEpochsOptions = DEFAULT_CLEAN_EPOCHS): QualityRow {
  if (!Number.isInteger(nClean) || nClean < 0) throw new QualityInputError(`invalid nClean: ${nClean}`);
  const flagged = nClean < options.minEpochs;
  const reason = flagged ? `only ${nClean} clean epochs${cell.stage ? ` in ${cell.stage}` : ''} (minimum ${options.minEpochs})` : null;
  return { ...cell, metric: 'clean-epochs', value: nClean, flagged, reason, severity: clampSeverity(options.minEpochs / nClean) };
}
