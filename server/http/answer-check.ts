import type { z } from 'zod';

export interface AnswerMismatch {
  /** Field paths ("items.0.createdBy") with what is wrong there. */
  problems: string[];
}

/**
 * Paths of fields in `sent` that the parse dropped: zod objects keep only declared keys, so a
 * key present in what the handler sent but absent from the parsed copy is not in the contract.
 * `unknown` fields and records come back whole and are never reported.
 */
function undeclaredFields(sent: unknown, parsed: unknown, path: string, out: string[]): void {
  if (sent === parsed || sent === null || typeof sent !== 'object' || parsed === null || typeof parsed !== 'object') return;
  if (Array.isArray(sent)) {
    if (!Array.isArray(parsed)) return;
    sent.forEach((item, i) => undeclaredFields(item, parsed[i], path ? `${path}.${i}` : String(i), out));
    return;
  }
  const kept = parsed as Record<string, unknown>;
  for (const [key, value] of Object.entries(sent as Record<string, unknown>)) {
    const at = path ? `${path}.${key}` : key;
    if (!(key in kept)) out.push(`${at}: not declared in the answer schema`);
    else undeclaredFields(value, kept[key], at, out);
  }
}

/**
 * Checks an answer as the client will receive it (after JSON) against its declared schema,
 * strictly: a missing required field, a wrong type and an undeclared field all count.
 * Returns null when the answer fits.
 */
export function checkAnswer(schema: z.ZodType, wire: unknown): AnswerMismatch | null {
  const result = schema.safeParse(wire);
  const problems: string[] = [];
  if (!result.success) {
    for (const issue of result.error.issues) problems.push(`${issue.path.join('.') || '(answer)'}: ${issue.message}`);
  } else {
    undeclaredFields(wire, result.data, '', problems);
  }
  return problems.length > 0 ? { problems } : null;
}
