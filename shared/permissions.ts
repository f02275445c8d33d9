/**
 * Who may call which API route: the one table the server's authorization middleware enforces
 * and the client reads to hide what a role cannot do. A route missing here is refused (deny by
 * default), so every new /api route adds its line.
 *
 *   'public'     anyone, signed in or not
 *   'signed-in'  any signed-in person, whatever their roles
 *   Role[]       signed-in people holding at least one of these roles
 */
import type { Role } from './roles.ts';

export type HttpMethod = 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';
export type Access = 'public' | 'signed-in' | readonly Role[];

export interface Permission {
  method: HttpMethod;
  /** Express-style path below the site root: literal segments and `:name` parameters */
  path: string;
  access: Access;
}

export const PERMISSIONS: readonly Permission[] = [
  { method: 'GET', path: '/api/health', access: 'public' },
  { method: 'GET', path: '/api/app-info', access: 'public' },
  { method: 'GET', path: '/api/me', access: 'signed-in' },
  { method: 'GET', path: '/api/audit', access: ['risk', 'admin'] },
  { method: 'GET', path: '/api/audit/verify', access: ['risk', 'admin'] },
  { method: 'GET', path: '/api/admin/role-mappings', access: ['admin'] },
  { method: 'PUT', path: '/api/admin/role-mappings', access: ['admin'] },
  { method: 'GET', path: '/api/admin/api-tokens', access: ['admin'] },
  { method: 'POST', path: '/api/admin/api-tokens', access: ['admin'] },
  { method: 'DELETE', path: '/api/admin/api-tokens/:id', access: ['admin'] },
  { method: 'GET', path: '/api/runs', access: 'signed-in' },
  { method: 'GET', path: '/api/runs/:id', access: 'signed-in' },
  { method: 'POST', path: '/api/runs', access: ['meteorologist'] },
  { method: 'GET', path: '/api/runs/:id/members', access: 'signed-in' },
  { method: 'POST', path: '/api/runs/:id/members/:member/retry', access: ['meteorologist'] },
  { method: 'GET', path: '/api/runs/:id/diagnostics', access: 'signed-in' },
  { method: 'GET', path: '/api/runs/:id/omega', access: 'signed-in' },
  { method: 'GET', path: '/api/runs/:id/section', access: 'signed-in' },
  { method: 'GET', path: '/api/scenarios', access: ['trader', 'risk', 'meteorologist', 'admin'] },
  { method: 'GET', path: '/api/scenarios/summary', access: ['trader', 'risk', 'meteorologist', 'admin'] },
  { method: 'GET', path: '/api/scenarios/export.xlsx', access: ['trader', 'risk'] },
  { method: 'GET', path: '/api/scenarios/export.csv', access: ['trader', 'risk'] },
  { method: 'GET', path: '/api/scenario-views', access: ['trader', 'risk', 'meteorologist', 'admin'] },
  { method: 'POST', path: '/api/scenario-views', access: ['trader', 'risk', 'meteorologist', 'admin'] },
  { method: 'DELETE', path: '/api/scenario-views/:id', access: ['trader', 'risk', 'meteorologist', 'admin'] },
  { method: 'GET', path: '/api/dev/outbox', access: 'signed-in' },
  { method: 'GET', path: '/api/regions', access: 'signed-in' },
  { method: 'PUT', path: '/api/regions', access: ['admin'] },
  { method: 'GET', path: '/api/calibration-sets', access: 'signed-in' },
  { method: 'POST', path: '/api/calibration-sets', access: ['meteorologist'] },
  { method: 'GET', path: '/api/runs/:id/signals', access: 'signed-in' },
  { method: 'POST', path: '/api/snapshots', access: ['risk'] },
  { method: 'GET', path: '/api/snapshots', access: ['risk', 'admin'] },
  { method: 'GET', path: '/api/snapshots/public-key', access: 'signed-in' },
  { method: 'GET', path: '/api/snapshots/verify-chain', access: ['risk', 'admin'] },
  { method: 'GET', path: '/api/snapshots/:id', access: ['risk', 'admin'] },
  { method: 'GET', path: '/api/snapshots/:id/verify', access: ['risk', 'admin'] },
  { method: 'GET', path: '/api/snapshots/:id/export.json', access: ['risk', 'admin'] },
  { method: 'GET', path: '/api/snapshots/:id/export.xlsx', access: ['risk', 'admin'] },
  { method: 'GET', path: '/api/runs/:id/clusterings', access: 'signed-in' },
  { method: 'POST', path: '/api/runs/:id/clusterings', access: ['meteorologist'] },
  { method: 'GET', path: '/api/clusterings/:id', access: 'signed-in' },
  { method: 'GET', path: '/api/regime-names', access: 'signed-in' },
  { method: 'POST', path: '/api/regime-names', access: ['admin'] },
  { method: 'PUT', path: '/api/regime-names/:id', access: ['admin'] },
  { method: 'GET', path: '/api/regime-calls', access: 'signed-in' },
  { method: 'POST', path: '/api/regime-calls', access: ['meteorologist'] },
  { method: 'GET', path: '/api/regime-calls/:id', access: 'signed-in' },
  { method: 'PUT', path: '/api/regime-calls/:id', access: ['meteorologist'] },
  { method: 'DELETE', path: '/api/regime-calls/:id', access: ['meteorologist'] },
  { method: 'GET', path: '/api/regime-calls/:id/preview', access: 'signed-in' },
  { method: 'POST', path: '/api/regime-calls/:id/publish', access: ['meteorologist'] },
  { method: 'POST', path: '/api/regime-calls/:id/corrections', access: ['meteorologist'] },
  { method: 'GET', path: '/api/subscriptions', access: ['admin'] },
  { method: 'POST', path: '/api/subscriptions', access: ['admin'] },
  { method: 'PUT', path: '/api/subscriptions/:id', access: ['admin'] },
  { method: 'DELETE', path: '/api/subscriptions/:id', access: ['admin'] },
];

function segments(path: string): string[] {
  return path.split('/').filter(Boolean);
}

/** Whether `pattern` (with :params) matches the concrete `path`. */
export function pathMatches(pattern: string, path: string): boolean {
  const p = segments(pattern);
  const s = segments(path);
  if (p.length !== s.length) return false;
  return p.every((part, i) => (part.startsWith(':') ? s[i].length > 0 : part === s[i]));
}

/** The table's entry for a request, or undefined (refused). HEAD is answered like GET. */
export function findPermission(method: string, path: string, table: readonly Permission[] = PERMISSIONS): Permission | undefined {
  const m = method.toUpperCase() === 'HEAD' ? 'GET' : method.toUpperCase();
  const exact = table.find((e) => e.method === m && !e.path.includes(':') && pathMatches(e.path, path));
  return exact ?? table.find((e) => e.method === m && pathMatches(e.path, path));
}

export type Decision = 'allow' | 'unauthenticated' | 'forbidden';

/** What the table says for someone with `roles` (null: signed out). */
export function decide(access: Access, roles: readonly Role[] | null): Decision {
  if (access === 'public') return 'allow';
  if (roles === null) return 'unauthenticated';
  if (access === 'signed-in') return 'allow';
  return access.some((r) => roles.includes(r)) ? 'allow' : 'forbidden';
}

/** For the client: may someone with `roles` call this route? */
export function canCall(method: HttpMethod, path: string, roles: readonly Role[] | null): boolean {
  const entry = findPermission(method, path);
  return entry !== undefined && decide(entry.access, roles) === 'allow';
}
