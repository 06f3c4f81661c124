// Issue 8: each answer type is written once, in shared/api, and the client parses every
// answer with it. Fails on an interface or type in src/ or server/ that restates an answer
// (same name, or the same keys as an answer object), and on a client *-api.ts HTTP call that
// is not piped through parseAnswer / emptyAnswer with a declared route of the same method.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import * as z from 'zod';
import type { RouteDeclaration } from '../../shared/api/route';
import { apiRoutes } from '../../shared/api/routes';
import { answerTypeNames, declaredShapes, objectSchemasIn, restatedAnswers, unparsedCalls } from './answer-contract';
import { repoRoot, sourceFiles } from './import-graph';

const sharedApiFiles = sourceFiles(['shared/api']);
const read = (file: string) => readFileSync(join(repoRoot, file), 'utf8');

/** Every export of every shared/api module, by name. */
async function sharedApiExports(): Promise<Map<string, unknown>> {
  const out = new Map<string, unknown>();
  for (const file of sharedApiFiles) {
    const mod = (await import(join(repoRoot, file))) as Record<string, unknown>;
    for (const [name, value] of Object.entries(mod)) out.set(name, value);
  }
  return out;
}

function answerObjectSchemas(): Set<z.ZodType> {
  const found = new Set<z.ZodType>();
  for (const route of apiRoutes) if (route.answer.kind !== 'empty') objectSchemasIn(route.answer.schema, found);
  return found;
}

function declaredRoutes(exports: Map<string, unknown>): Map<string, RouteDeclaration> {
  const routes = new Map<string, RouteDeclaration>();
  const declared = new Set<unknown>(apiRoutes);
  for (const [name, value] of exports) if (declared.has(value)) routes.set(name, value as RouteDeclaration);
  return routes;
}

describe('answer types are written once, in shared/api', async () => {
  const exports = await sharedApiExports();
  const answers = answerObjectSchemas();
  const names = answerTypeNames(sharedApiFiles.map(read), exports, answers);
  const routes = declaredRoutes(exports);

  it('finds the answer types and routes it checks against', () => {
    for (const name of ['Run', 'RunDetail', 'RunCertificate', 'ResonanceRow', 'ResonanceDetail', 'ModelDetail', 'Session', 'FitDetail', 'ModeMapPayload'])
      expect(names, name).toContain(name);
    expect(routes.get('getRunRoute')?.path).toBe('/groups/{groupId}/runs/{runId}');
    expect(routes.size).toBeGreaterThan(50);
  });

  it('no interface or type in src/ or server/ restates an answer of shared/api', () => {
    const declared = sourceFiles(['src', 'server']).flatMap((f) => declaredShapes(f, read(f)));
    expect(restatedAnswers(declared, names, answers)).toEqual([]);
  });

  it('every HTTP call of a client *-api.ts is parsed with its declared route', () => {
    const apiFiles = sourceFiles(['src']).filter((f) => f.endsWith('-api.ts'));
    expect(apiFiles.length).toBeGreaterThan(10);
    expect(apiFiles.flatMap((f) => unparsedCalls(f, read(f), routes))).toEqual([]);
  });

  it('HTTP is done only in *-api.ts files (components and pipes call those)', () => {
    const direct = sourceFiles(['src'])
      .filter((f) => !f.endsWith('-api.ts') && !f.endsWith('.spec.ts'))
      .filter((f) => /\binject\(HttpClient\)/.test(read(f)));
    expect(direct).toEqual([]);
  });

  it('the checks report a restated answer and an unparsed call (made-up files)', () => {
    const copy = declaredShapes(
      'src/app/runs/made-up.ts',
      `export interface RunCertificate { pieces: unknown[]; certified: boolean; summary: string }
       export interface PoleView { id: string; runId: string | null; source: string; fitId: string | null; modelId: string; modelName: string; modelVersion: number;
         family: string; keyDimensions: object; physics: string; microwave: unknown; validity: unknown; material: string; fieldT: number; energy: number;
         width: number; lifetimePs: number | null; quality: number | null; partialWidths: unknown[]; petermann: number | null; residual: number | null;
         bound: boolean; nearThreshold: boolean; overlapping: boolean; tags: string[]; notes: string; createdAt: string; thumbnailUrl: string | null; imageUrl: string | null }
       type Local = { a: number };`,
    );
    expect(restatedAnswers(copy, names, answers)).toEqual([
      'src/app/runs/made-up.ts:1 declares RunCertificate, an answer type of shared/api',
      expect.stringMatching(/^src\/app\/runs\/made-up\.ts:2 declares PoleView with the keys of an answer schema \(bound, createdAt/),
    ]);
    const calls = unparsedCalls(
      'src/app/runs/made-up-api.ts',
      `class A {
         a() { return this.http.get<Run>('/api/x'); }
         b() { return this.http.get('/api/x').pipe(map((x) => x)); }
         c() { return this.http.get('/api/x').pipe(parseAnswer(launchRunRoute)); }
         d() { return this.http.delete('/api/x').pipe(emptyAnswer(revokeTokenRoute)); }
         e() { return this.http.post('/api/x', {}).pipe(parseAnswer(someSchema)); }
       }`,
      routes,
    );
    expect(calls).toEqual([
      'src/app/runs/made-up-api.ts:2: http.get<…> casts the answer instead of parsing it',
      'src/app/runs/made-up-api.ts:2: http.get(…) is not piped through parseAnswer or emptyAnswer',
      'src/app/runs/made-up-api.ts:3: http.get(…) is not piped through parseAnswer or emptyAnswer',
      'src/app/runs/made-up-api.ts:4: http.get parsed as launchRun, a POST route',
      'src/app/runs/made-up-api.ts:6: parseAnswer(…) does not name a route declared in shared/api',
    ]);
  });
});
