import type { Request, Response } from 'express';

interface ProgressStream<V> {
  /** Reads the current state (a run's or a fit's view). */
  read: () => Promise<V>;
  /** The payload of a `progress` event for a state. */
  progress: (view: V) => unknown;
  /** Whether the state is final: the stream then sends `done` with its status and ends. */
  finished: (view: V) => boolean;
  /** Live change notifications (pg_notify through RunEvents); returns the unsubscribe. */
  subscribe?: (onChange: () => void) => () => void;
  /** Re-read every this many ms as well (a backstop, or the only source without notifications). */
  pollMs?: number;
}

/**
 * Server-sent events for a long job: `progress` on every change (an unchanged state is not
 * sent again), then `done` with the final status. Reads never overlap: a change that
 * arrives during a read triggers one more read after it.
 */
export function streamProgress<V extends { status: string }>(req: Request, res: Response, first: V, stream: ProgressStream<V>): void {
  res.writeHead(200, { 'Content-Type': 'text/event-stream', 'Cache-Control': 'no-cache', Connection: 'keep-alive', 'X-Accel-Buffering': 'no' });
  let ended = false;
  let last = '';
  let unsubscribe = () => {};
  const poll = stream.pollMs ? setInterval(() => void refresh(), stream.pollMs) : undefined;
  const keepAlive = setInterval(() => res.write(': keep-alive\n\n'), 15_000);
  const end = () => {
    if (ended) return;
    ended = true;
    clearInterval(poll);
    clearInterval(keepAlive);
    unsubscribe();
    res.end();
  };
  const send = (view: V) => {
    if (ended) return;
    const data = JSON.stringify(stream.progress(view));
    if (data !== last) res.write(`event: progress\ndata: ${data}\n\n`);
    last = data;
    if (stream.finished(view)) {
      res.write(`event: done\ndata: ${JSON.stringify({ status: view.status })}\n\n`);
      end();
    }
  };
  let busy = false;
  let again = false;
  const refresh = async () => {
    if (busy) return void (again = true);
    busy = true;
    try {
      do {
        again = false;
        send(await stream.read());
      } while (again && !ended);
    } catch {
      end();
    } finally {
      busy = false;
    }
  };
  req.on('close', end);
  if (stream.subscribe) unsubscribe = stream.subscribe(() => void refresh());
  send(first);
}
