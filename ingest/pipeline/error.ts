/** A failure of one step of one recording (goes to ingest_errors with file, step and field). */
export class PipelineError extends Error {
  override name = 'PipelineError';
  constructor(
    readonly step: string,
    readonly file: string | null,
    readonly field: string | null,
    message: string,
    options?: { cause?: unknown },
  ) {
    // the EDF reader's and the scoring readers' messages already start with the file
    super(file && !message.startsWith(`${file}: `) ? `${file}: ${message}` : message, options);
  }
}

/** Progress of one recording: the read pass (epochs), the stage pass (output channels), IRASA (epochs). */
export interface PipelineProgress {
  step: 'read' | 'spectra' | 'irasa';
  done: number;
  total: number;
}
