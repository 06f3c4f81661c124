import type { RunKind, RunStatus } from '../../../shared/api/enums';

export { windowText } from '../core/format/window-text';

/** Words for run kinds and statuses, and the window in one line, shared by the run pages. */
export const kindLabel: Record<RunKind, string> = {
  'pole-search': 'Pole search',
  transmission: 'Transmission sweep',
};

export const statusLabel: Record<RunStatus, string> = {
  queued: 'Queued',
  running: 'Running',
  completed: 'Completed',
  failed: 'Failed',
  cancelled: 'Cancelled',
};
