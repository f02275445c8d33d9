/**
 * The audit trail: hash-chained, append-only in the database, verifiable, readable by risk and
 * admin with filters and paging.
 */
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { recordAudit, verifyAuditChain } from '../../../server/services/audit.ts';
import { CookieJar, me, send, signInAs, startAuthTestApp, type AuthTestApp } from './harness.ts';

describe('audit trail', () => {
  let t: AuthTestApp;
  beforeAll(async () => {
    t = await startAuthTestApp();
  });
  afterAll(async () => {
    await t.close();
  });

  it('chains every row to the one before, also under concurrent writers', async () => {
    await Promise.all(
      Array.from({ length: 20 }, (_, i) =>
        recordAudit(t.db.db, { action: 'test.concurrent', actorLabel: `writer ${i}`, detail: { i, nested: { b: 2, a: [1, 'x'] } }, clientAddress: '::ffff:127.0.0.1' }),
      ),
    );
    const result = await verifyAuditChain(t.db.db);
    expect(result.firstBroken).toBeNull();
    expect(result.ok).toBe(true);
    const links = await t.db.pool.query<{ n: number }>(
      'SELECT count(*)::int AS n FROM audit_events a JOIN audit_events b ON b.prev_hash = a.hash',
    );
    const total = await t.db.pool.query<{ n: number }>('SELECT count(*)::int AS n FROM audit_events');
    // Every row but the first has exactly one predecessor: no fork in the chain.
    expect(links.rows[0].n).toBe(total.rows[0].n - 1);
  });

  it('rolls the audit row back with the write it belongs to', async () => {
    const before = await t.db.pool.query<{ n: number }>("SELECT count(*)::int AS n FROM audit_events WHERE action = 'test.rolled_back'");
    await expect(
      t.db.db.transaction(async (tx) => {
        await recordAudit(tx, { action: 'test.rolled_back', actorLabel: 'tester' });
        throw new Error('the write failed');
      }),
    ).rejects.toThrow('the write failed');
    const after = await t.db.pool.query<{ n: number }>("SELECT count(*)::int AS n FROM audit_events WHERE action = 'test.rolled_back'");
    expect(after.rows[0].n).toBe(before.rows[0].n);
  });

  it.each([
    ['UPDATE', "UPDATE audit_events SET actor_label = 'someone else'"],
    ['DELETE', 'DELETE FROM audit_events'],
    ['TRUNCATE', 'TRUNCATE audit_events'],
  ])('the database refuses %s on audit_events', async (op, statement) => {
    await recordAudit(t.db.db, { action: 'test.protected', actorLabel: 'tester' });
    await expect(t.db.pool.query(statement)).rejects.toThrow(new RegExp(`append-only: ${op}`));
  });

  it('names the row edited behind the application\u2019s back', async () => {
    const { id } = await recordAudit(t.db.db, { action: 'test.target', actorLabel: 'tester', detail: { amount: 10 } });
    await recordAudit(t.db.db, { action: 'test.after', actorLabel: 'tester' });
    // A superuser can lift the guard: exactly the case the hash chain is for.
    const admin = new pg.Client({ connectionString: t.config.databaseUrl });
    await admin.connect();
    const edit = async (amount: number) => {
      await admin.query('BEGIN');
      await admin.query('ALTER TABLE audit_events DISABLE TRIGGER audit_events_no_update_delete');
      await admin.query(`UPDATE audit_events SET detail = jsonb_build_object('amount', $1::int) WHERE id = $2`, [amount, id]);
      await admin.query('ALTER TABLE audit_events ENABLE TRIGGER audit_events_no_update_delete');
      await admin.query('COMMIT');
    };
    try {
      await edit(1000);
      const broken = await verifyAuditChain(t.db.db);
      expect(broken.ok).toBe(false);
      expect(broken.firstBroken?.id).toBe(id);
      expect(broken.firstBroken?.reason).toMatch(/content/);
    } finally {
      await edit(10);
      await admin.end();
    }
    expect((await verifyAuditChain(t.db.db)).ok).toBe(true);
  });

  it('records failed sign-ins with their reason, and lets risk read, filter, page and verify the trail', async () => {
    const refused = await send(new CookieJar(), `${t.baseUrl}/auth/saml/acs`, {
      method: 'POST',
      body: new URLSearchParams({ SAMLResponse: Buffer.from('<not-saml/>').toString('base64') }),
      headers: { Accept: 'application/json' },
    });
    expect(refused.status).toBe(401);

    const jar = new CookieJar();
    await signInAs(t, jar, 'risk');
    const failed = await (await send(jar, `${t.baseUrl}/api/audit?action=auth.sign_in_failed&limit=1`)).json();
    expect(failed.events).toHaveLength(1);
    expect(failed.events[0]).toMatchObject({ action: 'auth.sign_in_failed', actorLabel: 'anonymous', requestId: refused.headers.get('x-request-id'), clientAddress: '127.0.0.1' });
    expect(typeof failed.events[0].detail.reason).toBe('string');

    const mine = await (await send(jar, `${t.baseUrl}/api/audit?actor=${encodeURIComponent('Maren')}&action=auth.sign_in`)).json();
    expect(mine.events.length).toBeGreaterThan(0);
    expect(mine.events.every((e: { actorLabel: string }) => e.actorLabel === 'Maren Solvik')).toBe(true);

    const page1 = await (await send(jar, `${t.baseUrl}/api/audit?limit=3&offset=0`)).json();
    const page2 = await (await send(jar, `${t.baseUrl}/api/audit?limit=3&offset=3`)).json();
    expect(page1.events).toHaveLength(3);
    expect(page1.total).toBeGreaterThan(6);
    expect(page2.events[0].id).toBeLessThan(page1.events[2].id);

    const future = new Date(Date.now() + 3_600_000).toISOString();
    const none = await (await send(jar, `${t.baseUrl}/api/audit?from=${encodeURIComponent(future)}`)).json();
    expect(none).toEqual({ events: [], total: 0 });
    expect((await send(jar, `${t.baseUrl}/api/audit?from=yesterday`)).status).toBe(400);

    const verified = await (await send(jar, `${t.baseUrl}/api/audit/verify`)).json();
    expect(verified).toMatchObject({ ok: true, firstBroken: null });
    expect(verified.checked).toBe(page1.total);
  });

  it('admins change the group mapping; the next sign-in takes the new roles, and the change is audited', async () => {
    const admin = new CookieJar();
    await signInAs(t, admin, 'admin');
    const { csrfToken } = await (await me(t, admin)).json();
    const current = await (await send(admin, `${t.baseUrl}/api/admin/role-mappings`)).json();
    expect(current.mappings).toEqual(
      expect.arrayContaining([
        { group: 'lw-meteorologists', role: 'meteorologist' },
        { group: 'lw-admins', role: 'admin' },
      ]),
    );
    const put = (mappings: unknown) =>
      send(admin, `${t.baseUrl}/api/admin/role-mappings`, {
        method: 'PUT',
        headers: { 'Content-Type': 'application/json', 'X-CSRF-Token': csrfToken },
        body: JSON.stringify({ mappings }),
      });
    try {
      expect((await put([...current.mappings, { group: 'lw-analysts', role: 'trader' }, { group: 'lw-analysts', role: 'risk' }])).status).toBe(200);
      expect((await put([{ group: 'lw-analysts', role: 'superuser' }])).status).toBe(400);
      expect((await put([{ group: 'lw-analysts', role: 'trader' }])).status).toBe(422);
      const analyst = new CookieJar();
      await signInAs(t, analyst, 'custom', { name: 'Ana Lyst', email: 'ana.lyst@nordvale.example', otherGroups: 'lw-analysts' });
      expect((await (await me(t, analyst)).json()).roles).toEqual(['trader', 'risk']);
      const row = await t.db.pool.query("SELECT actor_label, detail FROM audit_events WHERE action = 'role_mapping.replace' ORDER BY id DESC LIMIT 1");
      expect(row.rows[0].actor_label).toBe('Anders Lund');
      expect(row.rows[0].detail.after).toContainEqual({ group: 'lw-analysts', role: 'risk' });
    } finally {
      expect((await put(current.mappings)).status).toBe(200);
    }
  });
});
