import { HttpErrorResponse } from '@angular/common/http';
// zod/mini: the classic build pulls ~450 kB (all locales) into the first chunk.
import * as z from 'zod/mini';
// Named import: touching the `z.core` namespace would pull every locale into the bundle.
import { $ZodError } from 'zod/v4/core';
import { MalformedAnswer } from '../http/parse-answer';

/** The JSON problem every API error answers: `{ status, code, message, issues? }`. */
export const problemSchema = z.object({
  status: z.number(),
  code: z.string(),
  message: z.string(),
  issues: z.optional(z.array(z.object({ path: z.string(), message: z.string() }))),
});
export type Problem = z.infer<typeof problemSchema>;

/**
 * Turns whatever a request failed with into a Problem, so every page words failures
 * the same way: the server's own message when it sent one, a plain fallback otherwise.
 */
export function toProblem(err: unknown): Problem {
  if (err instanceof HttpErrorResponse) {
    const parsed = problemSchema.safeParse(err.error);
    if (parsed.success) return parsed.data;
    if (err.status === 0) {
      return { status: 0, code: 'offline', message: 'The Poleward server cannot be reached. Check your connection and try again.' };
    }
    return {
      status: err.status,
      code: 'unexpected_response',
      message: `The server answered ${err.status}${err.statusText ? ' ' + err.statusText : ''} without an explanation.`,
    };
  }
  if (err instanceof MalformedAnswer) return { status: 0, code: 'bad_payload', message: err.message };
  if (err instanceof $ZodError) {
    const where = err.issues[0]?.path.join('.') || 'the body';
    return { status: 0, code: 'bad_payload', message: `The server's answer did not have the expected shape (at ${where}).` };
  }
  return { status: 0, code: 'client_error', message: err instanceof Error ? err.message : 'Something went wrong.' };
}
