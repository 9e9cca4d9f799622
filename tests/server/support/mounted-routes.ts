import type { Express } from 'express';
import { z } from 'zod';

/** One mounted API route: upper-case method and the Express path pattern, e.g. `PUT /api/admin/users/:id/roles`. */
export type MountedRoute = { method: string; path: string };

const routeSchema = z.object({ path: z.union([z.string(), z.array(z.string())]), methods: z.record(z.string(), z.boolean()) });
const layerSchema = z.object({ rawPath: z.unknown().optional(), route: z.unknown().optional(), handle: z.unknown() });
/** The `stack` of a router (routers are functions with a `stack` array), or null. */
const stackOf = (handle: unknown): unknown[] | null => {
  if ((typeof handle !== 'function' && typeof handle !== 'object') || handle === null || !('stack' in handle)) return null;
  return Array.isArray(handle.stack) ? handle.stack : null;
};

function join(prefix: string, path: string): string {
  const joined = `${prefix}/${path}`.replace(/\/+/g, '/');
  return joined.length > 1 ? joined.replace(/\/$/, '') : joined;
}

function walk(stack: unknown[], prefix: string, out: MountedRoute[]): void {
  for (const raw of stack) {
    const layer = layerSchema.safeParse(raw);
    if (!layer.success) continue;
    if (layer.data.route !== undefined) {
      const route = routeSchema.parse(layer.data.route);
      const paths = Array.isArray(route.path) ? route.path : [route.path];
      for (const p of paths) for (const m of Object.keys(route.methods)) out.push({ method: m.toUpperCase(), path: join(prefix, p) });
      continue;
    }
    const inner = stackOf(layer.data.handle);
    if (inner && typeof layer.data.rawPath === 'string') walk(inner, join(prefix, layer.data.rawPath), out);
  }
}

/**
 * Every route the app has mounted under /api, found by walking Express 5's router stack
 * (`app.router.stack`; each mounted router keeps its mount path in `rawPath`). The SPA fallback
 * and middleware without routes are left out.
 */
export function mountedApiRoutes(app: Express): MountedRoute[] {
  const stack = stackOf(app.router);
  if (!stack) throw new Error('app.router has no stack: the Express version changed; update mountedApiRoutes');
  const out: MountedRoute[] = [];
  walk(stack, '', out);
  return out.filter((r) => r.path.startsWith('/api/') || r.path === '/api');
}
