/**
 * Every declared route of the API, for the OpenAPI document, docs/api.md and the access
 * matrix test. A new area's declarations join this list.
 */
import * as account from './account.js';
import * as auth from './auth.js';
import * as backup from './backup.js';
import * as catalogue from './catalogue.js';
import * as fits from './fits.js';
import * as groups from './groups.js';
import * as meta from './meta.js';
import * as modeMaps from './mode-maps.js';
import * as models from './models.js';
import * as outbox from './outbox.js';
import type { RouteDeclaration } from './route.js';
import * as runs from './runs.js';
import { fabricationRoutes } from './fabrication.js';
import { studyRoutesDeclared } from './studies.js';

const methodOrder = ['get', 'post', 'put', 'patch', 'delete'];

/**
 * The declarations an area module exports (every export whose name ends in Route), by path
 * and method: a module namespace's key order differs between Node and bundlers.
 */
function declarationsOf(area: Record<string, unknown>): RouteDeclaration[] {
  return Object.entries(area)
    .filter(([name]) => name.endsWith('Route'))
    .map(([, value]) => value as RouteDeclaration)
    .sort((a, b) => (a.path === b.path ? methodOrder.indexOf(a.method) - methodOrder.indexOf(b.method) : a.path < b.path ? -1 : 1));
}

export const apiRoutes: readonly RouteDeclaration[] = [meta, auth, groups, models, runs, catalogue, modeMaps, backup, fits, account, outbox]
  .flatMap(declarationsOf)
  .concat(fabricationRoutes, studyRoutesDeclared);
