/**
 * Errors that describe the user's input or the machine's state, not a fault of the program. The
 * commands print them as one plain line, `bandwise <command>: <message>`, without a stack trace:
 * - exit status 2 (bad input, nothing done): an output that would destroy an input or another
 *   output (OutputClashError), an input file that cannot be read or is too large (InputFileError);
 * - exit status 1 (the data or the machine cannot do it): a database that is busy, missing, not
 *   bandwise's, or full (StoreError and its kinds), a contrast the data cannot support
 *   (PermutationTestInputError, ContrastDataError), a result that cannot be written (OutputWriteError),
 *   a dashboard app not built (AppNotBuiltError).
 * Anything else is a bug and keeps its trace.
 */
import { ContrastDataError } from '../core/contrast/assemble.ts';
import { PermutationTestInputError } from '../core/stats/permutation-test.ts';
import { StoreError } from '../../ingest/store/errors.ts';
import { AppNotBuiltError } from '../server/launcher.ts';
import { InputFileError } from '../files/input-files.ts';
import { OutputClashError, OutputWriteError } from '../files/output-files.ts';

/** The exit status of a user error (1 or 2), or null for any other error. */
export function userErrorStatus(e: unknown): 1 | 2 | null {
  if (e instanceof OutputClashError || e instanceof InputFileError) return 2;
  if (
    e instanceof StoreError ||
    e instanceof PermutationTestInputError ||
    e instanceof ContrastDataError ||
    e instanceof OutputWriteError ||
    e instanceof AppNotBuiltError
  )
    return 1;
  return null;
}

export function isUserError(e: unknown): e is Error {
  return userErrorStatus(e) !== null;
}

/** Prints a user error as `bandwise <command>: <message>` and sets its exit status; false for any other error. */
export function reportUserError(command: string, e: unknown): boolean {
  const status = userErrorStatus(e);
  if (status === null) return false;
  console.error(`bandwise ${command}: ${(e as Error).message}`);
  process.exitCode = status;
  return true;
}
