import type { StudySummary } from '../../../shared/api/studies';

/** Finished steps (completed, failed or cancelled) over all steps, 0–100. */
export function studyPercent(study: Pick<StudySummary, 'stepCount' | 'steps'>): number {
  if (!study.stepCount) return 0;
  const done = study.steps.completed + study.steps.failed + study.steps.cancelled;
  return Math.round((100 * done) / study.stepCount);
}

/** The step counts in words, e.g. "3 of 5 steps done, 1 running, 1 failed". */
export function studyProgressText(study: Pick<StudySummary, 'stepCount' | 'steps' | 'kind' | 'reusedSteps'>): string {
  const noun = study.kind === 'ensemble' ? 'realisations' : 'steps';
  const parts = [`${study.steps.completed} of ${study.stepCount} ${noun} done`];
  if (study.steps.running) parts.push(`${study.steps.running} running`);
  if (study.steps.queued) parts.push(`${study.steps.queued} queued`);
  if (study.steps.failed) parts.push(`${study.steps.failed} failed`);
  if (study.steps.cancelled) parts.push(`${study.steps.cancelled} cancelled`);
  if (study.reusedSteps) parts.push(`${study.reusedSteps} reused from earlier results`);
  return parts.join(', ');
}

export const studyStatusLabels: Record<StudySummary['status'], string> = {
  queued: 'Queued',
  running: 'Running',
  completed: 'Completed',
  failed: 'Failed',
  cancelled: 'Cancelled',
};
