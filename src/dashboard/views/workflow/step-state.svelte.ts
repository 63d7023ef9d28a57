// The state of the workflow step being taken from the dashboard (WorkflowActions.svelte). Kept
// outside the component: after a step the database is attached again, the views are drawn anew,
// and the outcome must still be there to read.
export class StepState {
  /** the step running, null when none */
  busy: string | null = $state(null);
  error: string | null = $state(null);
  /** what the last step did, in one line */
  done: string | null = $state(null);
}

export const stepState = new StepState();
