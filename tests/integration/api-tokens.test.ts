import { createHash } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signIn, startTestApp, type Client, type TestApp } from './support.ts';

/** A truncated GRIB2 file: accepted at upload (it has the magic), rejected later by the reader. */
function gribLike(seed: number): Uint8Array<ArrayBuffer> {
  const bytes = new Uint8Array(700);
  bytes.set([0x47, 0x52, 0x49, 0x42, 0, 0, 0, 2]);
  bytes[100] = seed & 0xff;
  bytes[101] = (seed >> 8) & 0xff;
  bytes[102] = process.pid & 0xff;
  bytes[103] = (process.pid >> 8) & 0xff;
  bytes[104] = Date.now() & 0xff;
  return bytes;
}

function bearer(t: TestApp, token: string, path: string, init: RequestInit = {}): Promise<Response> {
  const headers = new Headers(init.headers);
  headers.set('Authorization', `Bearer ${token}`);
  return fetch(`${t.baseUrl}${path}`, { ...init, headers });
}

function uploadForm(bytes: Uint8Array<ArrayBuffer>): FormData {
  const form = new FormData();
  form.append('file', new Blob([bytes]), 'scheduled.grib2');
  return form;
}

async function auditRows(t: TestApp, action: string, objectId?: string) {
  const res = await t.db.pool.query<{ actor_label: string; actor_id: string | null; detail: Record<string, unknown>; object_id: string | null }>(
    'SELECT actor_label, actor_id, detail, object_id FROM audit_events WHERE action = $1 AND ($2::text IS NULL OR object_id = $2) ORDER BY id',
    [action, objectId ?? null],
  );
  return res.rows;
}

describe('API tokens: issued by an admin, used by machines with Authorization: Bearer', () => {
  let t: TestApp;
  let admin: Client;
  const name = `nightly-upload-${process.pid}-${Date.now()}`;
  let token = '';
  let tokenId = '';

  beforeAll(async () => {
    t = await startTestApp({}, { workers: false });
    admin = await signIn(t, 'admin');
  });
  afterAll(async () => {
    await t.close();
  });

  it('an admin issues a token; its plaintext is answered once and only its SHA-256 is stored', async () => {
    const res = await admin.fetch('/api/admin/api-tokens', {
      method: 'POST',
      headers: { 'Content-Type': 'application/json' },
      body: JSON.stringify({ name, roles: ['meteorologist'] }),
    });
    expect(res.status).toBe(201);
    const body = await res.json();
    token = body.token;
    tokenId = body.apiToken.id;
    expect(token).toMatch(/^lw_[A-Za-z0-9_-]{43}$/);
    expect(body.apiToken).toMatchObject({ name, roles: ['meteorologist'], revokedAt: null, lastUsedAt: null });
    const stored = await t.db.pool.query('SELECT token_hash FROM api_tokens WHERE id = $1', [tokenId]);
    expect(stored.rows[0].token_hash).toBe(createHash('sha256').update(token).digest('hex'));

    const list = await (await admin.fetch('/api/admin/api-tokens')).json();
    const listed = list.tokens.find((x: { id: string }) => x.id === tokenId);
    expect(listed).toMatchObject({ name, roles: ['meteorologist'] });
    expect(JSON.stringify(list)).not.toContain(token);
    expect(JSON.stringify(list)).not.toContain(stored.rows[0].token_hash);

    const [issued] = await auditRows(t, 'api_token.issue', tokenId);
    expect(issued.detail).toMatchObject({ name, roles: ['meteorologist'] });
    expect(JSON.stringify(issued)).not.toContain(token);
  });

  it('the token uploads a run without cookies or CSRF token, acting as "token:<name>", and is marked as used', async () => {
    const res = await bearer(t, token, '/api/runs', { method: 'POST', body: uploadForm(gribLike(1)) });
    expect(res.status, await res.clone().text()).toBe(201);
    const { run } = await res.json();
    const [event] = await auditRows(t, 'run.upload', run.id);
    expect(event.actor_label).toBe(`token:${name}`);
    const uploader = await t.db.pool.query('SELECT u.name FROM runs r JOIN users u ON u.id = r.uploaded_by WHERE r.id = $1', [run.id]);
    expect(uploader.rows[0].name).toBe(`token:${name}`);
    const used = await t.db.pool.query('SELECT last_used_at FROM api_tokens WHERE id = $1', [tokenId]);
    expect(used.rows[0].last_used_at).toBeInstanceOf(Date);
    const me = await (await bearer(t, token, '/api/me')).json();
    expect(me).toMatchObject({ name: `token:${name}`, roles: ['meteorologist'] });
  });

  it("the token's roles decide: a meteorologist token may not read the audit trail or issue tokens", async () => {
    expect((await bearer(t, token, '/api/audit')).status).toBe(403);
    const res = await bearer(t, token, '/api/admin/api-tokens', { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: '{"name":"x","roles":["admin"]}' });
    expect(res.status).toBe(403);
  });

  it('a browser request carrying a session cookie still needs its CSRF token, even with a bearer token', async () => {
    const raw = await fetch(`${t.baseUrl}/api/runs`, {
      method: 'POST',
      headers: { Authorization: `Bearer ${token}`, Cookie: 'liftwise.sid=s%3Aanything.sig' },
      body: uploadForm(gribLike(3)),
    });
    expect(raw.status).toBe(403);
    expect((await raw.json()).error.code).toBe('csrf');
  });

  it('an unknown or malformed token is answered 401 with a clear message and recorded', async () => {
    const unknown = `lw_${'A'.repeat(43)}`;
    const a = await bearer(t, unknown, '/api/runs');
    expect(a.status).toBe(401);
    expect((await a.json()).error).toMatchObject({ code: 'invalid_token', message: expect.stringMatching(/not known to this server/) });
    const b = await bearer(t, 'not-a-token', '/api/runs');
    expect(b.status).toBe(401);
    expect((await b.json()).error.message).toMatch(/not in the expected form/);
    // Another scheme (say Basic, from a proxy in front) is left alone: the request is simply signed out.
    const basic = await fetch(`${t.baseUrl}/api/runs`, { headers: { Authorization: 'Basic dXNlcjpwYXNz' } });
    expect(basic.status).toBe(401);
    expect((await basic.json()).error.code).toBe('unauthorized');
    const refused = await auditRows(t, 'auth.token_refused');
    expect(refused.map((r) => r.detail.reason)).toEqual(expect.arrayContaining(['unknown', 'malformed']));
  });

  it('a revoked token is refused at once, and the revocation is audited', async () => {
    const res = await admin.fetch(`/api/admin/api-tokens/${tokenId}`, { method: 'DELETE' });
    expect(res.status).toBe(200);
    expect((await res.json()).apiToken.revokedAt).not.toBeNull();
    const after = await bearer(t, token, '/api/runs');
    expect(after.status).toBe(401);
    expect((await after.json()).error.message).toMatch(/revoked/);
    expect(await auditRows(t, 'api_token.revoke', tokenId)).toHaveLength(1);
    const refused = await auditRows(t, 'auth.token_refused', tokenId);
    expect(refused.at(-1)?.detail.reason).toBe('revoked');
    expect((await admin.fetch(`/api/admin/api-tokens/${tokenId}`, { method: 'DELETE' })).status).toBe(422);
  });
});

describe('API token requests are rate-limited per address like sign-in', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp({ AUTH_RATE_LIMIT_PER_MINUTE: '3' }, { workers: false });
  });
  afterAll(async () => {
    await t.close();
  });

  it('the fourth token request within a minute is answered 429', async () => {
    const guess = `lw_${'B'.repeat(43)}`;
    const statuses = [];
    for (let i = 0; i < 4; i++) statuses.push((await bearer(t, guess, '/api/runs')).status);
    expect(statuses).toEqual([401, 401, 401, 429]);
    // Requests without a token are not counted.
    expect((await fetch(`${t.baseUrl}/api/health`)).status).toBeLessThan(500);
  });
});
