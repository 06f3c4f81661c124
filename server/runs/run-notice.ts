import { DEFAULT_STALE_AFTER_SECONDS } from '../jobs/queues.js';

/** A queued run waiting longer than this gets a notice on its page and in the list. */
export const WAITING_NOTICE_SECONDS = 120;

interface RunTimes {
  status: string;
  createdAt: Date;
  heartbeatAt: Date | null;
}

function span(seconds: number): string {
  return seconds < 120 ? `${Math.round(seconds)} s` : `${Math.round(seconds / 60)} min`;
}

/**
 * What the owner of an unfinished run should know when it seems stuck: a queued
 * run no worker has taken for a while, or a running run whose worker has gone
 * quiet. Null while nothing looks wrong. The supervisor (server/jobs/supervisor.ts)
 * hands such runs on by itself; the notice says so, and what to do if it lasts.
 */
export function runNotice(run: RunTimes, now = Date.now(), staleSeconds = DEFAULT_STALE_AFTER_SECONDS): string | null {
  if (run.status === 'queued') {
    const since = Math.max(run.createdAt.getTime(), run.heartbeatAt?.getTime() ?? 0);
    const waited = (now - since) / 1000;
    if (waited < WAITING_NOTICE_SECONDS) return null;
    return `No worker has taken this run for ${span(waited)}. Other runs may be ahead of it; it starts as soon as a worker is free. If no run of the group moves, the worker processes may be down: tell whoever runs the Poleward server.`;
  }
  if (run.status === 'running' && run.heartbeatAt) {
    const silent = (now - run.heartbeatAt.getTime()) / 1000;
    if (silent < staleSeconds) return null;
    return `The worker computing this run has not reported for ${span(silent)}; the run will be handed to another worker and start again.`;
  }
  return null;
}
