/**
 * Every queue of Poleward, with its retry and expiry policy, in one place.
 * Later job kinds (peak fits, parameter sweeps, geometry files) add an entry here
 * and a handler file beside worker.ts.
 *
 * Crash recovery: the worker beats a heartbeat on the run row every few seconds;
 * the supervisor (supervisor.ts) fails the pg-boss job of a run whose heartbeat is
 * older than `staleAfterSeconds`, and pg-boss retries it (up to retryLimit). The
 * pg-boss expiry is only the backstop for a supervisor that is not running.
 */
export interface QueueSpec {
  name: string;
  retryLimit: number;
  retryDelaySeconds: number;
  expireInSeconds: number;
}

export const RUN_QUEUES = {
  'pole-search': {
    name: 'pole-search',
    retryLimit: 3,
    retryDelaySeconds: 2,
    expireInSeconds: 4 * 3600,
  },
  transmission: {
    name: 'transmission',
    retryLimit: 3,
    retryDelaySeconds: 2,
    expireInSeconds: 4 * 3600,
  },
} as const satisfies Record<string, QueueSpec>;

/**
 * Peak fits too large to compute during the request (server/fits). A fit takes seconds to
 * a few minutes; a lost one is retried after its expiry.
 */
export const FIT_QUEUE = {
  name: 'peak-fit',
  retryLimit: 2,
  retryDelaySeconds: 2,
  expireInSeconds: 15 * 60,
} as const satisfies QueueSpec;

export type RunKind = keyof typeof RUN_QUEUES;

/** The payload of every run job: the run row holds everything else. */
export interface RunJobData {
  runId: string;
}

/** Seconds between heartbeats of a busy worker, and the age after which a run counts as lost. */
export const HEARTBEAT_SECONDS = 3;
export const DEFAULT_STALE_AFTER_SECONDS = 30;

/**
 * Mode maps (server/modemaps): scattering states and Husimi maps computed on demand.
 * Short jobs (seconds); a lost worker's map is handed on by the supervisor like a run
 * (mode-map-supervisor.ts), and the expiry is only the backstop.
 */
export const MODE_MAP_QUEUE = {
  name: 'mode-map',
  retryLimit: 2,
  retryDelaySeconds: 2,
  expireInSeconds: 600,
} as const satisfies QueueSpec;

/**
 * E-mail notifications (server/fabrication/notification-job.ts): one job per message. A
 * failed send (the mail provider down) is retried with back-off, 5 times over about 10
 * minutes; after the last try the notification is marked failed and listed to admins.
 */
export const NOTIFICATION_QUEUE = {
  name: 'notification',
  retryLimit: 5,
  retryDelaySeconds: 10,
  expireInSeconds: 120,
} as const satisfies QueueSpec;

/**
 * Steps of parameter studies and tolerance ensembles (server/studies): one job per
 * step, so every worker process takes steps. A step whose worker dies comes back when
 * its job expires (POLEWARD_STUDY_STEP_EXPIRE_SECONDS, default below) and is retried;
 * the step's attempt counter keeps a late writer from storing it twice.
 */
export const STUDY_STEP_QUEUE = {
  name: 'study-step',
  retryLimit: 3,
  retryDelaySeconds: 1,
  expireInSeconds: 15 * 60,
} as const satisfies QueueSpec;
