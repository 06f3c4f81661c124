// The project's own import graph, read with the TypeScript compiler's own parser and
// module resolution (so `./x.js` finds `x.ts` as tsc and the bundlers do). Type-only
// imports count: a loop through types still ties two files together.
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join, relative, sep } from 'node:path';
import ts from 'typescript';

export const repoRoot = join(import.meta.dirname, '..', '..');

const compilerOptions: ts.CompilerOptions = {
  module: ts.ModuleKind.Preserve,
  moduleResolution: ts.ModuleResolutionKind.Bundler,
  resolveJsonModule: true,
  allowImportingTsExtensions: true,
};

/** Every .ts file under the given folders (relative to the repo root), as repo-relative paths. */
export function sourceFiles(folders: string[]): string[] {
  const files: string[] = [];
  const walk = (dir: string) => {
    for (const name of readdirSync(dir)) {
      const path = join(dir, name);
      if (statSync(path).isDirectory()) walk(path);
      else if (name.endsWith('.ts') && !name.endsWith('.d.ts')) files.push(path);
    }
  };
  for (const folder of folders) walk(join(repoRoot, folder));
  return files.map((f) => relative(repoRoot, f).split(sep).join('/')).sort();
}

/** The project files each file imports (static, type-only and dynamic imports, re-exports). */
export function importGraph(files: string[]): Map<string, string[]> {
  const known = new Set(files);
  const graph = new Map<string, string[]>();
  for (const file of files) {
    const text = readFileSync(join(repoRoot, file), 'utf8');
    const { importedFiles } = ts.preProcessFile(text, true, true);
    const targets = new Set<string>();
    for (const { fileName } of importedFiles) {
      if (!fileName.startsWith('.')) continue; // packages are not part of the project graph
      const resolved = ts.resolveModuleName(fileName, join(repoRoot, file), compilerOptions, ts.sys).resolvedModule;
      if (!resolved) continue;
      const target = relative(repoRoot, resolved.resolvedFileName).split(sep).join('/');
      if (known.has(target)) targets.add(target);
    }
    graph.set(file, [...targets].sort());
  }
  return graph;
}

/**
 * The import loops: strongly connected components of more than one file (or a file that
 * imports itself), found with Tarjan's algorithm (Tarjan 1972, SIAM J. Comput. 1(2) 146).
 */
export function importLoops(graph: Map<string, string[]>): string[][] {
  let counter = 0;
  const index = new Map<string, number>();
  const low = new Map<string, number>();
  const stack: string[] = [];
  const onStack = new Set<string>();
  const loops: string[][] = [];
  const visit = (v: string) => {
    index.set(v, counter);
    low.set(v, counter);
    counter++;
    stack.push(v);
    onStack.add(v);
    for (const w of graph.get(v) ?? []) {
      if (!index.has(w)) {
        visit(w);
        low.set(v, Math.min(low.get(v)!, low.get(w)!));
      } else if (onStack.has(w)) {
        low.set(v, Math.min(low.get(v)!, index.get(w)!));
      }
    }
    if (low.get(v) === index.get(v)) {
      const component: string[] = [];
      let w: string;
      do {
        w = stack.pop()!;
        onStack.delete(w);
        component.push(w);
      } while (w !== v);
      if (component.length > 1 || (graph.get(v) ?? []).includes(v)) loops.push(component.sort());
    }
  };
  for (const v of graph.keys()) if (!index.has(v)) visit(v);
  return loops;
}

/** The client area a file belongs to: the folder under src/app/ ('core' or a feature), or null. */
function clientArea(file: string): string | null {
  return /^src\/app\/([^/]+)\//.exec(file)?.[1] ?? null;
}

/**
 * Imports that break the client's layering: a feature folder importing another feature
 * folder, or core/ importing a feature. Features may import core/ and shared/; only the
 * top-level files (app.routes.ts, app.config.ts) tie the features together.
 */
export function crossFeatureImports(graph: Map<string, string[]>): string[] {
  const found: string[] = [];
  for (const [file, targets] of graph) {
    const from = clientArea(file);
    if (!from) continue;
    for (const target of targets) {
      const to = clientArea(target);
      if (to && to !== from && to !== 'core') found.push(`${file} -> ${target}`);
    }
  }
  return found;
}
