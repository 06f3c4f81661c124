import type { ErrorRequestHandler, RequestHandler } from 'express';
import { isDatabaseOutage, OUTAGE_RETRY_SECONDS } from './database-outage.js';

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

export function errorHandler(log: (msg: string, err: unknown) => void = console.error): ErrorRequestHandler {
  return (err, req, res, _next) => {
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
      problem = new ApiError(503, 'database_unavailable', `The database cannot be reached just now; nothing was changed. Try again in ${OUTAGE_RETRY_SECONDS} s.`);
    } else {
      log(`[poleward] ${req.method} ${req.originalUrl} failed:`, err);
      problem = new ApiError(500, 'internal', 'Something went wrong on the server; the error has been logged.');
    }
    if (res.headersSent) return;
    if (problem.status === 503) res.setHeader('Retry-After', String(OUTAGE_RETRY_SECONDS));
    res.status(problem.status).json({
      status: problem.status,
      code: problem.code,
      message: problem.message,
      ...(problem.issues ? { issues: problem.issues } : {}),
    });
  };
}
