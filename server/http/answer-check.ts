import type { z } from 'zod';

interface AnswerMismatch {
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

/**
 * Which JSON answers mountRoute checks against their schemas: `every` one (tests and
 * development), or a `sample` (production's default): the first 20 answers of each route
 * after the process starts, then one in 50. A full check parses the answer back and walks
 * every field through zod, which cost as much CPU as the rest of a catalogue page; a
 * contract slip a change brings in shows in the tests (every answer checked there) and in
 * production within the first answers of the route, while a slip that only some rows
 * trigger is found there later, by the sample. POLEWARD_ANSWER_CHECK=every|sample overrides.
 */
export type AnswerCheckMode = 'every' | 'sample';

export function answerCheckMode(env: Record<string, string | undefined> = process.env): AnswerCheckMode {
  const asked = env.POLEWARD_ANSWER_CHECK;
  if (asked === 'every' || asked === 'sample') return asked;
  return env.NODE_ENV === 'production' ? 'sample' : 'every';
}

/** Decides, answer by answer, whether one route's answer is checked. */
export class AnswerSample {
  private seen = 0;

  constructor(
    private readonly mode: AnswerCheckMode,
    private readonly first = 20,
    private readonly oneIn = 50,
  ) {}

  due(): boolean {
    if (this.mode === 'every') return true;
    this.seen++;
    return this.seen <= this.first || this.seen % this.oneIn === 0;
  }
}
