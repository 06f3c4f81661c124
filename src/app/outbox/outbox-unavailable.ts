import { toProblem } from '../core/errors/problem';

/** The outbox answers 404 both to everyone but the site operator and when a real mail host is configured. */
export function outboxUnavailable(err: unknown): string | null {
  return toProblem(err).status === 404
    ? 'The outbox exists only while mail goes to the local stand-in, and only the site operator (the person who runs this installation) can read it.'
    : null;
}
