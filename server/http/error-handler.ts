import type { ErrorRequestHandler, Request, RequestHandler } from 'express';
import { isDatabaseOutage, outageRetrySeconds } from './database-outage.js';

export interface FieldIssue {
  path: string;
  message: string;
}

/**
 * The one error type of the API. Services throw it; the handler below turns it into
 * the JSON problem `{ status, code, message, issues? }` every client reads.
 */
export class ApiError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly issues?: FieldIssue[],
    /** Sent as the Retry-After header (seconds) with a 429 or 503. */
    readonly retryAfterSeconds?: number,
  ) {
    super(message);
    this.name = 'ApiError';
  }
}

/** Unknown /api routes answer JSON, not the SPA's index.html. */
export const apiNotFound: RequestHandler = (req, _res, next) => {
  next(new ApiError(404, 'not_found', `There is no API route ${req.method} ${req.originalUrl.split('?')[0]}.`));
};

/** Body-parser errors carry a `type`; they are the client's fault and get a 4xx, not a 500. */
interface BodyParserError {
  type?: string;
  status?: number;
  limit?: number;
}

/**
 * Told about every problem before it is answered, so refusals (CSRF, rate limits) are
 * recorded by the time the client sees them. Must not reject.
 */
export type ProblemObserver = (req: Request, problem: ApiError) => Promise<void> | void;

export function errorHandler(log: (msg: string, err: unknown) => void = console.error, observe?: ProblemObserver): ErrorRequestHandler {
  return async (err, req, res, _next) => {
    let problem: ApiError;
    const bp = err as BodyParserError;
    if (err instanceof ApiError) problem = err;
    else if (bp?.type === 'entity.parse.failed') {
      problem = new ApiError(400, 'invalid_json', 'The request body is not valid JSON.');
    } else if (bp?.type === 'entity.too.large') {
      problem = new ApiError(413, 'payload_too_large', `The request body is larger than the limit of ${bp.limit} bytes.`);
    } else if (typeof bp?.status === 'number' && bp.status >= 400 && bp.status < 500) {
      problem = new ApiError(bp.status, 'bad_request', err instanceof Error ? err.message : 'Bad request.');
    } else if (isDatabaseOutage(err)) {
      // Not a bug: the database is down or restarting. Nothing was half-written (each
      // change is one transaction); the client may simply try again.
      log(`[poleward] ${req.method} ${req.originalUrl}: database unavailable:`, (err as Error)?.message ?? err);
      problem = new ApiError(
        503,
        'database_unavailable',
        `The database cannot be reached right now; nothing was changed. Try again in ${outageRetrySeconds} seconds.`,
      );
      if (!res.headersSent) res.setHeader('Retry-After', String(outageRetrySeconds));
    } else {
      log(`[poleward] ${req.method} ${req.originalUrl} failed:`, err);
      problem = new ApiError(500, 'internal', 'Something went wrong on the server; the error has been logged.');
    }
    await observe?.(req, problem);
    if (res.headersSent) return;
    if (problem.retryAfterSeconds !== undefined) res.setHeader('Retry-After', String(Math.max(1, Math.ceil(problem.retryAfterSeconds))));
    res.status(problem.status).json({
      status: problem.status,
      code: problem.code,
      message: problem.message,
      ...(problem.issues ? { issues: problem.issues } : {}),
    });
  };
}
