import { and, eq, inArray } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditEvents, regimeNames, subscriptions } from '../../server/db/schema.ts';
import { signIn, startTestApp, type Client, type TestApp } from './support.ts';

const email = `subs-${process.pid}@nordvale.example`;
const regime = `Test regime ${process.pid}`;

describe('mail subscriptions and regime names (admin)', () => {
  let t: TestApp;
  let admin: Client;
  let met: Client;
  const json = { 'Content-Type': 'application/json' };

  beforeAll(async () => {
    t = await startTestApp({}, { workers: false });
    admin = await signIn(t, 'admin');
    met = await signIn(t, 'meteorologist');
    await t.db.db.delete(subscriptions).where(inArray(subscriptions.email, [email]));
  });
  afterAll(async () => {
    await t.db.db.delete(subscriptions).where(inArray(subscriptions.email, [email]));
    await t.db.db.delete(regimeNames).where(inArray(regimeNames.name, [regime, `${regime} (renamed)`]));
    await t.close();
  });

  it('admin creates, edits and removes a subscription, each step audited', async () => {
    const created = await admin.fetch('/api/subscriptions', { method: 'POST', headers: json, body: JSON.stringify({ email: email.toUpperCase(), name: 'Hydro desk', regionIds: ['north'] }) });
    expect(created.status).toBe(201);
    const { subscription } = await created.json();
    expect(subscription).toMatchObject({ email, name: 'Hydro desk', regionIds: ['north'], active: true });
    const dup = await admin.fetch('/api/subscriptions', { method: 'POST', headers: json, body: JSON.stringify({ email, name: 'Again' }) });
    expect(dup.status).toBe(409);
    const bad = await admin.fetch('/api/subscriptions', { method: 'POST', headers: json, body: JSON.stringify({ email: 'not-an-address', name: 'x' }) });
    expect(bad.status).toBe(400);
    const put = await admin.fetch(`/api/subscriptions/${subscription.id}`, { method: 'PUT', headers: json, body: JSON.stringify({ email, name: 'Hydro desk', regionIds: [], active: false }) });
    expect((await put.json()).subscription).toMatchObject({ regionIds: [], active: false });
    const list = (await (await admin.fetch('/api/subscriptions')).json()).subscriptions;
    expect(list.some((s: { email: string }) => s.email === email)).toBe(true);
    expect((await admin.fetch(`/api/subscriptions/${subscription.id}`, { method: 'DELETE' })).status).toBe(204);
    expect(await t.db.db.select().from(subscriptions).where(eq(subscriptions.id, subscription.id))).toHaveLength(0);
    const events = await t.db.db.select().from(auditEvents).where(and(eq(auditEvents.objectType, 'subscription'), eq(auditEvents.objectId, subscription.id)));
    expect(events.map((e) => e.action).sort()).toEqual(['subscription.create', 'subscription.delete', 'subscription.update']);
  });

  it('only admins manage subscriptions and regime names; everyone signed in reads the names', async () => {
    expect((await met.fetch('/api/subscriptions')).status).toBe(403);
    expect((await met.fetch('/api/regime-names', { method: 'POST', headers: json, body: JSON.stringify({ name: regime }) })).status).toBe(403);
    expect((await met.fetch('/api/regime-names')).status).toBe(200);
  });

  it('admin adds and renames a regime name, audited; a duplicate name is refused', async () => {
    const res = await admin.fetch('/api/regime-names', { method: 'POST', headers: json, body: JSON.stringify({ name: regime, description: 'for the test' }) });
    expect(res.status).toBe(201);
    const { name } = await res.json();
    expect((await admin.fetch('/api/regime-names', { method: 'POST', headers: json, body: JSON.stringify({ name: regime }) })).status).toBe(409);
    const put = await admin.fetch(`/api/regime-names/${name.id}`, { method: 'PUT', headers: json, body: JSON.stringify({ name: `${regime} (renamed)`, active: false }) });
    expect((await put.json()).name).toMatchObject({ name: `${regime} (renamed)`, active: false });
    const events = await t.db.db.select().from(auditEvents).where(and(eq(auditEvents.objectType, 'regime_name'), eq(auditEvents.objectId, String(name.id))));
    expect(events.map((e) => e.action).sort()).toEqual(['regime_name.create', 'regime_name.update']);
  });
});
