/**
 * Every declared route of the API, for the OpenAPI document, docs/api.md and the access
 * matrix test. A new area's declarations join this list.
 */
import type { RouteDeclaration } from './route.js';
import { healthRoute, openApiDocumentRoute } from './meta.js';
import { fabricationRoutes } from './fabrication.js';
import { studyRoutesDeclared } from './studies.js';

export const apiRoutes: readonly RouteDeclaration[] = [healthRoute, openApiDocumentRoute, ...fabricationRoutes, ...studyRoutesDeclared];
