import type { Response } from 'express';

/**
 * A signal aborted when the client goes away before its answer is sent, so an
 * abandoned request stops its computation in the compute pool.
 */
export function clientGone(res: Response): AbortSignal {
  const controller = new AbortController();
  res.once('close', () => {
    if (!res.writableFinished) controller.abort();
  });
  return controller.signal;
}
