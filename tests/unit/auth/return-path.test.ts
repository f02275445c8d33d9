import { describe, expect, it } from 'vitest';
import { safeReturnPath } from '../../../server/routes/auth.ts';

describe('where sign-in may return to', () => {
  it.each(['/', '/scenarios', '/runs/42?level=500#map'])('accepts the site path %s', (p) => {
    expect(safeReturnPath(p)).toBe(p);
  });
  it.each(['//evil.example/', '/\\evil.example', 'https://evil.example/', 'javascript:alert(1)', '', '/a b', 42])('refuses %s', (p) => {
    expect(safeReturnPath(p)).toBeNull();
  });
});
