import { map, type OperatorFunction } from 'rxjs';
import type { z } from 'zod';

/** An API answer that does not fit the contract in shared/api: reported like any failed request. */
export class MalformedAnswer extends Error {
  constructor(
    readonly issues: readonly { path: string; message: string }[],
    what: string,
  ) {
    const first = issues[0];
    super(
      `The server's ${what} did not have the expected form${first ? ` (at ${first.path || 'the top'}: ${first.message})` : ''}. Reload the page; if it stays, tell the site operator.`,
    );
    this.name = 'MalformedAnswer';
  }
}

/**
 * Parses an HTTP answer with its schema from shared/api: the value that goes on is typed by
 * the schema, and an answer of another form becomes a MalformedAnswer error (which
 * ErrorReport shows) instead of a silent undefined further down.
 */
export function parseAnswer<S extends z.ZodType>(schema: S, what = 'answer'): OperatorFunction<unknown, z.output<S>> {
  return map((answer) => {
    const result = schema.safeParse(answer);
    if (result.success) return result.data;
    throw new MalformedAnswer(
      result.error.issues.map((i) => ({ path: i.path.map(String).join('.'), message: i.message })),
      what,
    );
  });
}
