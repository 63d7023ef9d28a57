/**
 * Errors that describe the user's input or the machine's state, not a fault of the program: a
 * database that is busy, missing or full (StoreError and its kinds), a contrast the data cannot
 * support (PermutationTestInputError, ContrastDataError), a dashboard app not built
 * (AppNotBuiltError). The commands print them as one plain line, without a stack trace, and exit
 * with status 1; anything else is a bug and keeps its trace.
 */
import { ContrastDataError } from '../core/contrast/assemble.ts';
import { PermutationTestInputError } from '../core/stats/permutation-test.ts';
import { StoreError } from '../../ingest/store/errors.ts';
import { AppNotBuiltError } from '../server/launcher.ts';

export function isUserError(e: unknown): e is Error {
  return e instanceof StoreError || e instanceof PermutationTestInputError || e instanceof ContrastDataError || e instanceof AppNotBuiltError;
}

/** Prints a user error as `bandwise <command>: <message>` and sets exit status 1; false for any other error. */
export function reportUserError(command: string, e: unknown): boolean {
  if (!isUserError(e)) return false;
  console.error(`bandwise ${command}: ${e.message}`);
  process.exitCode = 1;
  return true;
}
