import { diffJson } from 'diff';

interface DiffLine {
  kind: 'same' | 'added' | 'removed' | 'skipped';
  text: string;
}

/**
 * The line diff of two model documents as pretty JSON (keys in the documents' own
 * order), by the `diff` package's JSON diff. Runs of more than 2·context unchanged
 * lines are folded into one "n unchanged lines" line, so the changes stand out.
 */
export function documentDiff(a: unknown, b: unknown, context = 3): { lines: DiffLine[]; changed: number } {
  const parts = diffJson(a as object, b as object);
  const lines: DiffLine[] = [];
  let changed = 0;
  for (const part of parts) {
    const text = part.value.endsWith('\n') ? part.value.slice(0, -1) : part.value;
    const kind: DiffLine['kind'] = part.added ? 'added' : part.removed ? 'removed' : 'same';
    const own = text.split('\n');
    if (kind !== 'same') changed += own.length;
    if (kind === 'same' && own.length > 2 * context + 1) {
      lines.push(...own.slice(0, context).map((t) => ({ kind, text: t })));
      lines.push({ kind: 'skipped', text: `… ${own.length - 2 * context} unchanged lines …` });
      lines.push(...own.slice(-context).map((t) => ({ kind, text: t })));
    } else lines.push(...own.map((t) => ({ kind, text: t })));
  }
  return { lines, changed };
}
