/** The method + path of every route an Express app registers, read from its router stack (Express 5, router 2). */
import type express from 'express';
import { findPermission, PERMISSIONS, type Permission } from '@shared/permissions.ts';

interface Layer {
  rawPath?: unknown;
  route?: { path: unknown; methods: Record<string, boolean> };
  handle?: { stack?: Layer[] };
}

export interface RegisteredRoute {
  method: string;
  path: string;
}

function join(prefix: string, path: string): string {
  const joined = `${prefix}/${path}`.replace(/\/+/g, '/');
  return joined.length > 1 ? joined.replace(/\/$/, '') : joined;
}

function walk(stack: Layer[], prefix: string, out: RegisteredRoute[]): void {
  for (const layer of stack) {
    if (layer.route) {
      const paths = Array.isArray(layer.route.path) ? layer.route.path : [layer.route.path];
      for (const p of paths) {
        for (const [method, on] of Object.entries(layer.route.methods)) {
          if (on && method !== '_all') out.push({ method: method.toUpperCase(), path: join(prefix, String(p)) });
        }
      }
    } else if (layer.handle?.stack) {
      walk(layer.handle.stack, typeof layer.rawPath === 'string' ? join(prefix, layer.rawPath) : prefix, out);
    }
  }
}

export function registeredRoutes(app: express.Express): RegisteredRoute[] {
  const out: RegisteredRoute[] = [];
  walk((app as unknown as { router: { stack: Layer[] } }).router.stack, '', out);
  return out;
}

/** /api routes an app registers that the permission table does not list (they are refused). */
export function unlistedApiRoutes(app: express.Express, table: readonly Permission[] = PERMISSIONS): RegisteredRoute[] {
  return registeredRoutes(app).filter((r) => (r.path === '/api' || r.path.startsWith('/api/')) && !findPermission(r.method, r.path, table));
}
