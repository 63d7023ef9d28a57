/** A contrast the data cannot serve (a stage, group, column or range that is not there); the commands print it as one line, exit status 1. */
export class ContrastDataError extends Error {
  override name = 'ContrastDataError';
}
