import { describe, expect, it } from 'vitest';
import { canCall, decide, findPermission, pathMatches, PERMISSIONS, type Permission } from '@shared/permissions.ts';
import { ROLES } from '@shared/roles.ts';

describe('the permission table', () => {
  it('has one entry per method and path, and names only known roles', () => {
    const keys = PERMISSIONS.map((p) => `${p.method} ${p.path}`);
    expect(new Set(keys).size).toBe(keys.length);
    for (const p of PERMISSIONS) {
      if (Array.isArray(p.access)) {
        expect(p.access.length).toBeGreaterThan(0);
        for (const r of p.access) expect(ROLES).toContain(r);
      } else expect(['public', 'signed-in']).toContain(p.access);
    }
  });

  it('keeps the audit trail for risk and admin, role mapping for admin', () => {
    expect(canCall('GET', '/api/audit', ['risk'])).toBe(true);
    expect(canCall('GET', '/api/audit', ['trader'])).toBe(false);
    expect(canCall('PUT', '/api/admin/role-mappings', ['admin'])).toBe(true);
    expect(canCall('PUT', '/api/admin/role-mappings', ['risk', 'meteorologist'])).toBe(false);
    expect(canCall('GET', '/api/me', [])).toBe(true);
    expect(canCall('GET', '/api/me', null)).toBe(false);
  });
});

describe('matching', () => {
  it('matches :params against exactly one non-empty segment', () => {
    expect(pathMatches('/api/runs/:id', '/api/runs/42')).toBe(true);
    expect(pathMatches('/api/runs/:id', '/api/runs')).toBe(false);
    expect(pathMatches('/api/runs/:id', '/api/runs/42/cancel')).toBe(false);
    expect(pathMatches('/api/health', '/api/health/')).toBe(true);
  });

  it('prefers a literal path over a parameter at the same place', () => {
    const table: Permission[] = [
      { method: 'GET', path: '/api/runs/:id', access: ['trader'] },
      { method: 'GET', path: '/api/runs/latest', access: 'signed-in' },
    ];
    expect(findPermission('GET', '/api/runs/latest', table)?.access).toBe('signed-in');
    expect(findPermission('GET', '/api/runs/7', table)?.access).toEqual(['trader']);
  });

  it('answers HEAD like GET, and knows nothing of an unlisted method or path', () => {
    expect(findPermission('HEAD', '/api/health')?.path).toBe('/api/health');
    expect(findPermission('DELETE', '/api/health')).toBeUndefined();
    expect(findPermission('GET', '/api/nowhere')).toBeUndefined();
  });

  it('decides 401 for the signed-out and 403 for a missing role', () => {
    expect(decide('public', null)).toBe('allow');
    expect(decide('signed-in', null)).toBe('unauthenticated');
    expect(decide(['admin'], null)).toBe('unauthenticated');
    expect(decide(['admin'], [])).toBe('forbidden');
    expect(decide(['admin', 'risk'], ['risk'])).toBe('allow');
  });
});
