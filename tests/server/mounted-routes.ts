// Express's own list of routes, walked from the router tree: the OpenAPI test and the
// access-matrix test compare it with what is described, so no route escapes either.
import type { Express } from 'express';

export interface Layer {
  route?: { path: unknown; methods: Record<string, boolean> };
  handle: { stack?: Layer[] };
  rawPath?: unknown;
}

/** Every method + path the router tree answers, in OpenAPI spelling (:id → {id}). */
export function mountedRoutes(stack: Layer[], prefix = ''): string[] {
  const joined = (a: string, b: unknown) => {
    if (typeof b !== 'string') throw new Error(`a route or mount path under '${a}' is not a plain string (${String(b)}); teach this walk about it`);
    return b === '/' ? a : a + b;
  };
  return stack.flatMap((layer) => {
    if (layer.route) {
      const path = joined(prefix, layer.route.path).replace(/:(\w+)/g, '{$1}') || '/';
      return Object.keys(layer.route.methods)
        .filter((m) => m !== '_all')
        .map((m) => `${m} ${path}`);
    }
    if (layer.handle.stack) {
      if (layer.rawPath === undefined) throw new Error('this router version keeps no rawPath on its layers; the route walk needs updating');
      return mountedRoutes(layer.handle.stack, joined(prefix, layer.rawPath));
    }
    return [];
  });
}

/** The /api routes of a running app, as "method /api/path/{param}". */
export function apiRoutesOf(app: Express): string[] {
  return mountedRoutes((app as unknown as { router: { stack: Layer[] } }).router.stack).filter((r) => r.split(' ')[1]!.startsWith('/api/'));
}
