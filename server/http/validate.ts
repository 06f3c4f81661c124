import type { Request } from 'express';
import type { z } from 'zod';
import { ApiError, type FieldIssue } from './error-handler.js';

interface RequestSchemas {
  params?: z.ZodType;
  query?: z.ZodType;
  body?: z.ZodType;
}

interface ValidRequest {
  params?: unknown;
  query?: unknown;
  body?: unknown;
}

/**
 * The one request validation. Body issues are named by the field path alone
 * ("email", "members.0.role") so a form can show them next to its inputs; query and
 * path parameters are prefixed ("query.limit", "params.id"). Throws a 400
 * validation_failed naming every bad field; mount-route.ts calls it for every route.
 */
export function validateRequest(schemas: RequestSchemas, req: Request): ValidRequest {
  const issues: FieldIssue[] = [];
  const valid: ValidRequest = {};
  for (const where of ['params', 'query', 'body'] as const) {
    const schema = schemas[where];
    if (!schema) continue;
    const result = schema.safeParse(where === 'body' ? (req.body ?? {}) : req[where]);
    if (result.success) valid[where] = result.data;
    else {
      for (const issue of result.error.issues) {
        const parts = issue.path.map(String);
        const path = where === 'body' ? parts.join('.') : [where, ...parts].join('.');
        issues.push({ path: path || where, message: issue.message });
      }
    }
  }
  if (issues.length > 0) {
    const named = issues.map((i) => `${i.path} (${i.message})`).join('; ');
    throw new ApiError(400, 'validation_failed', `Some fields are not valid: ${named}.`, issues);
  }
  return valid;
}
