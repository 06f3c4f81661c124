// Writes the route reference of docs/api.md from the declarations in shared/api.
// `npx tsx scripts/docs-api.ts` (npm run docs:api) rewrites it; `--check` only says whether it is current.
import { readFileSync, writeFileSync } from 'node:fs';
import { apiRoutes } from '../shared/api/routes.js';
import { currentReference, renderApiReference, withReference } from '../server/openapi/api-reference.js';

const path = new URL('../docs/api.md', import.meta.url);
const markdown = readFileSync(path, 'utf8');
const reference = renderApiReference(apiRoutes);
if (process.argv.includes('--check')) {
  const current = currentReference(markdown) === reference;
  console.log(current ? 'docs/api.md: the route reference is current.' : 'docs/api.md: the route reference is stale; run npm run docs:api.');
  process.exit(current ? 0 : 1);
}
writeFileSync(path, withReference(markdown, reference));
console.log(`docs/api.md: route reference written (${apiRoutes.length} routes).`);
