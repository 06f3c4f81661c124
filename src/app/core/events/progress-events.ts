import { Observable } from 'rxjs';
import type { z } from 'zod';

/** Creates an EventSource; a seam so specs can hand in a fake one (jsdom has none). */
export type EventSourceFactory = (url: string) => EventSource;

/** The browser's EventSource with credentials, or null when it has none (then features poll). */
export const browserEventSource: EventSourceFactory | null =
  typeof EventSource === 'function' ? (url) => new EventSource(url, { withCredentials: true }) : null;

/**
 * A long job's server-sent event stream (server/http/progress-stream.ts) as an observable
 * of its `progress` payloads, each parsed with its schema from shared/api, ending in 'poll': after `done` one GET fetches the exact final
 * state, and after a stream error polling takes over, so both cases end the same way.
 * `pass` decides which payloads go on (a fit leaves its final one to that GET).
 */
export function progressEvents<S extends z.ZodType>(
  factory: EventSourceFactory,
  url: string,
  schema: S,
  pass: (data: z.output<S>) => boolean = () => true,
): Observable<z.output<S> | 'poll'> {
  type T = z.output<S>;
  return new Observable<T | 'poll'>((subscriber) => {
    const source = factory(url);
    const handOver = () => {
      source.close();
      subscriber.next('poll');
      subscriber.complete();
    };
    source.addEventListener('progress', (e: Event) => {
      let parsed: unknown;
      try {
        parsed = JSON.parse((e as MessageEvent<string>).data);
      } catch {
        return; // A malformed message is skipped; the next one or the final GET corrects it.
      }
      const data = schema.safeParse(parsed);
      if (!data.success) return; // same: the final GET, parsed with its answer schema, reports a real mismatch
      if (pass(data.data)) subscriber.next(data.data);
    });
    source.addEventListener('done', handOver);
    source.addEventListener('error', handOver);
    return () => source.close();
  });
}
