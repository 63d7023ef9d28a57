/**
 * Errors of the split, lock and confirm commands that describe the input or the database's state
 * (a split refused, a plan missing, blinded groups named by their values): printed as one line
 * with exit status 1, as the other commands print theirs (user-errors.ts).
 */
import { SplitError } from '../core/confirmation/split.ts';
import { reportUserError } from './user-errors.ts';

export function reportWorkflowError(command: string, e: unknown): boolean {
  if (e instanceof SplitError) {
    console.error(`bandwise ${command}: ${e.message}`);
    process.exitCode = 1;
    return true;
  }
  return reportUserError(command, e);
}
