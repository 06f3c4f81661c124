// docs/api.md carries a route reference printed from the declarations in shared/api; this
// fails when a declaration changed and `npm run docs:api` was not run.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import * as z from 'zod';
import { declareRoute, json } from '../../shared/api/route.js';
import { apiRoutes } from '../../shared/api/routes.js';
import { currentReference, renderApiReference } from '../../server/openapi/api-reference.js';

describe('the route reference of docs/api.md', () => {
  it('is what the generator prints from the declarations (run `npm run docs:api` after changing one)', () => {
    const markdown = readFileSync(new URL('../../docs/api.md', import.meta.url), 'utf8');
    const current = currentReference(markdown);
    expect(current, 'docs/api.md has no generated route reference').not.toBeNull();
    expect(current).toBe(renderApiReference(apiRoutes));
  });

  it('lists every declared route, and a change of an answer field shows in it', () => {
    const reference = renderApiReference(apiRoutes);
    for (const r of apiRoutes) expect(reference).toContain(`\`${r.method.toUpperCase()} /api${r.path}\` (${r.id})`);
    const route = (extra: boolean) =>
      declareRoute({
        id: 'sample',
        method: 'get',
        path: '/sample',
        access: 'public',
        tag: 'meta',
        summary: 'A sample',
        answer: json(200, 'It', z.object({ width: z.number(), ...(extra ? { lifetimePs: z.number().nullable() } : {}) })),
      });
    expect(renderApiReference([route(false)])).not.toContain('lifetimePs');
    expect(renderApiReference([route(true)])).toContain('`lifetimePs` (number | null)');
  });
});
