/**
 * Mounts a route handler from its declaration in shared/api: the access guard of the
 * declared rule, then any route-specific middleware (rate limits, uploads), then the
 * declared params/query/body schemas, then the handler with typed input. A JSON answer is
 * checked against the declared schema before it is sent: every answer in tests and
 * development, a sample of them in production (answerCheckMode in answer-check.ts).
 *
 * An answer that does not fit its schema (a field missing, mistyped or undeclared) is a
 * server bug: it is logged with the field paths and answered 500 answer_mismatch, in every
 * environment. The client parses answers with the same schemas and would refuse it anyway,
 * so sending it would only move the error to a screen; a 500 lands in the server log where
 * it can be fixed, and tests see it at once (outside production the problem names the fields).
 */
import type { Request, RequestHandler, Response, Router } from 'express';
import type { z } from 'zod';
import type { EmptyAnswer, JsonAnswer, MediaAnswer, RouteDeclaration, RouteInput } from '../../shared/api/route.js';
import { accessGuard } from './access-guard.js';
import { AnswerSample, answerCheckMode, checkAnswer, type AnswerCheckMode } from './answer-check.js';
import { ApiError } from './error-handler.js';
import { validateRequest } from './validate.js';

/** A JSON answer with a success status other than the declared one (it must be in `alsoStatus`). */
class WithStatus<T> {
  constructor(
    readonly status: number,
    readonly body: T,
  ) {}
}

export function withStatus<T>(status: number, body: T): WithStatus<T> {
  return new WithStatus(status, body);
}

/**
 * A JSON answer already serialised (a cached answer's text): sent as it is, with the
 * declared status, after the same answer check as any other JSON answer.
 */
class JsonText {
  constructor(readonly text: string) {}
}

export function jsonText(text: string): JsonText {
  return new JsonText(text);
}

/**
 * A value as a handler may hand it over: JSON turns a Date into the ISO string the contract
 * declares, so a Date stands where a (non-literal) string is declared.
 */
type Wire<T> = T extends string
  ? string extends T
    ? string | Date
    : T
  : T extends readonly (infer U)[]
    ? Wire<U>[]
    : T extends Date
      ? T
      : T extends object
        ? { [K in keyof T]: Wire<T[K]> }
        : T;

type Awaitable<T> = T | Promise<T>;

/** What the handler of route D returns: the answer for JSON routes, nothing when it writes the answer itself. */
export type HandlerResult<D extends RouteDeclaration> =
  D['answer'] extends JsonAnswer<infer S>
    ? Wire<z.input<S>> | WithStatus<Wire<z.input<S>>> | JsonText
    : D['answer'] extends EmptyAnswer | MediaAnswer
      ? void
      : never;

export type RouteHandler<D extends RouteDeclaration> = (input: RouteInput<D>, req: Request, res: Response) => Awaitable<HandlerResult<D>>;

interface MountOptions {
  /** Middleware between the access guard and validation: rate limits, multipart uploads. */
  before?: RequestHandler[];
  /** Where answer mismatches are reported (console.error by default). */
  log?: (msg: string, err: unknown) => void;
  /** Which answers are checked against the schema (default: answerCheckMode() of the environment). */
  answerCheck?: AnswerCheckMode;
}

const isProduction = () => process.env.NODE_ENV === 'production';

/** '/groups/{groupId}/runs' → '/groups/:groupId/runs' */
function expressPath(path: string): string {
  return path.replace(/\{(\w+)\}/g, ':$1');
}

/**
 * Serialises a JSON answer (unless it is JsonText already) and, when `check`, checks it
 * against its schema; throws 500 answer_mismatch when it does not fit.
 */
function checkedJson(route: RouteDeclaration, schema: z.ZodType, body: unknown, log: (msg: string, err: unknown) => void, check = true): string {
  const text = body instanceof JsonText ? body.text : JSON.stringify(body);
  if (!check) return text;
  const mismatch = checkAnswer(schema, text === undefined ? undefined : JSON.parse(text));
  if (mismatch) {
    const where = `${route.method.toUpperCase()} /api${route.path} (${route.id})`;
    log(`[poleward] the answer of ${where} does not fit its declared schema:`, mismatch.problems);
    const detail = isProduction() ? '' : ` ${mismatch.problems.slice(0, 5).join('; ')}`;
    throw new ApiError(500, 'answer_mismatch', `The server built an answer that does not fit its own contract.${detail}`);
  }
  return text;
}

export function mountRoute<const D extends RouteDeclaration>(router: Router, route: D, handler: RouteHandler<D>, options: MountOptions = {}): void {
  const log = options.log ?? ((msg: string, err: unknown) => console.error(msg, err));
  const sample = new AnswerSample(options.answerCheck ?? answerCheckMode());
  const run: RequestHandler = async (req, res) => {
    const valid = validateRequest(route, req);
    const input = {
      params: valid.params ?? req.params,
      query: valid.query,
      body: valid.body,
    } as RouteInput<D>;
    const result = await handler(input, req, res);
    const answer = route.answer;
    if (answer.kind === 'json') {
      const { status, body } = result instanceof WithStatus ? result : { status: answer.status, body: result };
      if (status !== answer.status && !answer.alsoStatus?.includes(status)) {
        throw new Error(`${route.id} answered ${status}, which its declaration does not list`);
      }
      res
        .status(status)
        .type('application/json')
        .send(checkedJson(route, answer.schema, body, log, sample.due()));
    } else if (answer.kind === 'empty') {
      if (!res.headersSent) res.status(answer.status).end();
    }
    // Media answers are written by the handler (files, images, event streams).
  };
  router[route.method](expressPath(route.path), ...accessGuard(route.access), ...(options.before ?? []), run);
}
