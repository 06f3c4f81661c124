// Coverage of the engine and the server, from vitest's json-summary report: one line per
// area, so `npm test` shows each figure on its own rather than one total over both.
import { existsSync, readFileSync } from 'node:fs';
import { relative, sep } from 'node:path';

interface Counts {
  total: number;
  covered: number;
}
type FileSummary = Record<'lines' | 'statements' | 'functions' | 'branches', Counts>;

/** Areas in the order printed; a file counts in the first area whose folder holds it. */
export const coverageAreas = [
  { name: 'engine', folder: 'shared/engine/' },
  { name: 'model and units', folder: 'shared/' },
  { name: 'server', folder: 'server/' },
];

/** Adds up the per-file counts of a json-summary report by area (paths relative to root). */
export function coverageByArea(summary: Record<string, FileSummary>, root: string): Map<string, FileSummary> {
  const areas = new Map<string, FileSummary>();
  for (const [file, counts] of Object.entries(summary)) {
    if (file === 'total') continue;
    const path = relative(root, file).split(sep).join('/');
    const area = coverageAreas.find((a) => path.startsWith(a.folder));
    if (!area) continue;
    const sum = areas.get(area.name) ?? {
      lines: { total: 0, covered: 0 },
      statements: { total: 0, covered: 0 },
      functions: { total: 0, covered: 0 },
      branches: { total: 0, covered: 0 },
    };
    for (const kind of ['lines', 'statements', 'functions', 'branches'] as const) {
      sum[kind].total += counts[kind].total;
      sum[kind].covered += counts[kind].covered;
    }
    areas.set(area.name, sum);
  }
  return areas;
}

const percent = (c: Counts) => (c.total ? `${((100 * c.covered) / c.total).toFixed(1)} %` : '–');

/** Prints the table; says so when the report is missing (the test step failed before writing it). */
export function printCoverageByArea(file: string, root: string): void {
  if (!existsSync(file)) {
    console.log(`[test] no coverage report at ${file}`);
    return;
  }
  const areas = coverageByArea(JSON.parse(readFileSync(file, 'utf8')) as Record<string, FileSummary>, root);
  console.log('[test] coverage (vitest, v8; code run in worker threads and child processes not counted):');
  console.log(`[test]   ${'area'.padEnd(16)} ${'lines'.padStart(8)} ${'branches'.padStart(9)} ${'functions'.padStart(10)}`);
  for (const { name } of coverageAreas) {
    const a = areas.get(name);
    if (!a) continue;
    console.log(`[test]   ${name.padEnd(16)} ${percent(a.lines).padStart(8)} ${percent(a.branches).padStart(9)} ${percent(a.functions).padStart(10)}`);
  }
}
