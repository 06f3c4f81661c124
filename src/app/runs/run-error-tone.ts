import type { Run } from '../../../shared/api/runs';

/**
 * How to show a run's error line. A run that is queued or running again carries the
 * reason its last attempt ended (a worker stopped answering, say when the app was
 * shut down, or an attempt failed and is retried): that is news, not a failure, and
 * is shown as a plain notice. Only a failed run's error is shown as an error.
 */
export function runErrorTone(run: Pick<Run, 'status' | 'error'>): 'failure' | 'retry' | null {
  if (!run.error) return null;
  return run.status === 'queued' || run.status === 'running' ? 'retry' : 'failure';
}
