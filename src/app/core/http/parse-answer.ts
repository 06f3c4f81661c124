import { map, type OperatorFunction } from 'rxjs';
import type { z } from 'zod';
import type { EmptyAnswer, JsonAnswer, RouteDeclaration } from '../../../../shared/api/route';

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

/** A route of shared/api whose answer is JSON. */
type JsonRoute = RouteDeclaration & { answer: JsonAnswer };

/**
 * Parses an HTTP answer with the answer schema the route declares in shared/api (or with a
 * schema of shared/api, for a part of an answer): the value that goes on is typed by the
 * schema, and an answer of another form becomes a MalformedAnswer error (which
 * ErrorReport shows) instead of a silent undefined further down. Every HTTP call of a
 * `*-api.ts` goes through this or `emptyAnswer` (tests/structure/answer-types-once.test.ts).
 */
export function parseAnswer<D extends JsonRoute>(route: D, what?: string): OperatorFunction<unknown, z.output<D['answer']['schema']>>;
export function parseAnswer<S extends z.ZodType>(schema: S, what?: string): OperatorFunction<unknown, z.output<S>>;
export function parseAnswer(routeOrSchema: JsonRoute | z.ZodType, what = 'answer'): OperatorFunction<unknown, unknown> {
  const schema = 'answer' in routeOrSchema ? routeOrSchema.answer.schema : routeOrSchema;
  return map((answer) => {
    const result = schema.safeParse(answer);
    if (result.success) return result.data;
    throw new MalformedAnswer(
      result.error.issues.map((i) => ({ path: i.path.map(String).join('.'), message: i.message })),
      what,
    );
  });
}

/** For a route that answers without a body (204): nothing is passed on but the completion. */
export function emptyAnswer(route: RouteDeclaration & { answer: EmptyAnswer }): OperatorFunction<unknown, void> {
  void route; // named so that the call site says which declared route it calls
  return map((): void => undefined);
}
