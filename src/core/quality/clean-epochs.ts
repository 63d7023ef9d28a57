import { clampSeverity, QualityInputError, type Cell, type QualityRow } from './row.ts';

export interface CleanEpochsOptions {
  /** Fewest clean epochs for a usable stage spectrum (default 20 = 10 min of 30-s epochs; our choice — pass the pipeline's own minimum). */
  minEpochs: number;
}

export const DEFAULT_CLEAN_EPOCHS: Readonly<CleanEpochsOptions> = { minEpochs: 20 };

/**
 * Too few clean epochs in a stage: value = nClean; flagged below minEpochs; severity = minEpochs / nClean.
 * When the night itself scored fewer than minEpochs epochs of the stage (nScored), the channel is
 * not at fault: the row is a note, not a flag (the stage spectrum is flagged 'too-few-epochs' anyway).
 */
export function cleanEpochs(cell: Cell, nClean: number, options: CleanEpochsOptions = DEFAULT_CLEAN_EPOCHS, nScored?: number): QualityRow {
  if (!Number.isInteger(nClean) || nClean < 0) throw new QualityInputError(`invalid nClean: ${nClean}`);
  if (nScored !== undefined && nScored < options.minEpochs) {
    const reason = `the night has only ${nScored} scored epochs${cell.stage ? ` of ${cell.stage}` : ''} (minimum ${options.minEpochs}); not a channel problem`;
    return { ...cell, metric: 'clean-epochs', value: nClean, flagged: false, reason, severity: 0 };
  }
  const flagged = nClean < options.minEpochs;
  const reason = flagged ? `only ${nClean} clean epochs${cell.stage ? ` in ${cell.stage}` : ''} (minimum ${options.minEpochs})` : null;
  return { ...cell, metric: 'clean-epochs', value: nClean, flagged, reason, severity: clampSeverity(options.minEpochs / nClean) };
}
