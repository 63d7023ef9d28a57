/** The data cannot serve the contrast (a channel missing, too few subjects, no positions): said in one line. */
export class ContrastDataError extends Error {
  override name = 'ContrastDataError';
}
