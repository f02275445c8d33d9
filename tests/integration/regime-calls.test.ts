import { randomBytes } from 'node:crypto';
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { and, eq, inArray } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CAUTIONS } from '@shared/cautions.ts';
import { auditEvents, outboxMails, regimeCalls, regions, runs, signalRows, subscriptions } from '../../server/db/schema.ts';
import { startMailCatcher, type CaughtMail, type MailCatcher } from '../../server/dev/mail-catcher.ts';
import { signIn, startTestApp, type Client, type TestApp } from './support.ts';
import { ensureDefaultCalibrationSet, latestCalibrationSet } from '../../server/services/calibration.ts';

async function freePort(): Promise<number> {
  return new Promise((resolve) => {
    const s = net.createServer().listen(0, '127.0.0.1', () => {
      const { port } = s.address() as net.AddressInfo;
      s.close(() => resolve(port));
    });
  });
}

const tag = `calls${process.pid}`;
const subscriber = `desk-${tag}@nordvale.example`;
const otherRegion = `south-${tag}@nordvale.example`;

describe('regime calls: drafts, publish with e-mail through a real SMTP server, corrections, immutability', () => {
  let t: TestApp;
  let met: Client;
  let trader: Client;
  let admin: Client;
  let catcher: MailCatcher | null = null;
  let port: number;
  let westerly: number;
  /** a stored ensemble run whose members the calls weight */
  let runId: string;
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-calls-'));

  async function mailsFor(callId: string) {
    return t.db.db.select().from(outboxMails).where(and(eq(outboxMails.relatedType, 'regime_call'), eq(outboxMails.relatedId, callId)));
  }

  async function caughtFor(subject: string, want: number): Promise<CaughtMail[]> {
    const until = Date.now() + 10_000;
    for (;;) {
      const got = (await catcher!.list()).filter((m) => m.subject === subject);
      if (got.length >= want || Date.now() > until) return got;
      await t.mail!.sender.kick();
      await new Promise((r) => setTimeout(r, 100));
    }
  }

  async function draft(overrides: Record<string, unknown> = {}) {
    const body = {
      validFrom: '2026-12-03',
      validTo: '2026-12-05',
      regimes: [{ from: '2026-12-03', to: '2026-12-05', regimeId: westerly }],
      confidence: 'high',
      weights: { basis: 'member', weights: [{ key: `${runId}:0`, pct: 60 }, { key: `${runId}:1`, pct: 40 }] },
      keyRisks: 'Faster front than the control.',
      narrative: `Wet westerly spell (${tag}).\n\n- **rain** on the western catchments\n- dry in the east`,
      ...overrides,
    };
    const res = await met.fetch('/api/regime-calls', { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify(body) });
    expect(res.status).toBe(201);
    return (await res.json()).call as { id: string; seriesId: string; version: number };
  }

  const publish = (c: Client, id: string) => c.fetch(`/api/regime-calls/${id}/publish`, { method: 'POST' });

  beforeAll(async () => {
    port = await freePort();
    catcher = await startMailCatcher({ port, dir: path.join(dir, 'up') });
    t = await startTestApp({ SMTP_URL: `smtp://127.0.0.1:${port}` }, { workers: false, mail: {} });
    met = await signIn(t, 'meteorologist');
    trader = await signIn(t, 'trader');
    admin = await signIn(t, 'admin');
    await t.db.db.delete(subscriptions).where(inArray(subscriptions.email, [subscriber, otherRegion]));
    const json = { 'Content-Type': 'application/json' };
    for (const body of [
      { email: subscriber, name: 'Desk', regionIds: [] },
      { email: otherRegion, name: 'South desk', regionIds: [`no-signals-${tag}`] },
    ]) {
      expect((await admin.fetch('/api/subscriptions', { method: 'POST', headers: json, body: JSON.stringify(body) })).status).toBe(201);
    }
    const names = (await (await met.fetch('/api/regime-names')).json()).names as { id: number; name: string }[];
    westerly = names.find((n) => n.name === 'Westerly flow')!.id;
    const [run] = await t.db.db
      .insert(runs)
      .values({ checksum: randomBytes(32).toString('hex'), sizeBytes: 1, fileName: 'calls-test.nc', state: 'ready', isEnsemble: true, members: [0, 1, 2] })
      .returning();
    runId = run.id;
  });
  afterAll(async () => {
    await t.db.db.delete(subscriptions).where(inArray(subscriptions.email, [subscriber, otherRegion]));
    await t.db.db.delete(runs).where(eq(runs.id, runId));
    await t.close();
    await catcher?.stop();
    fs.rmSync(dir, { recursive: true, force: true });
  });

  it('the regime names are seeded with the desk\'s own words', async () => {
    const names = (await (await trader.fetch('/api/regime-names')).json()).names.map((n: { name: string }) => n.name);
    expect(names).toEqual(expect.arrayContaining(['Westerly flow', 'Blocking high', 'Northerly outbreak', 'Southwesterly mild and wet', 'Slack high pressure']));
  });

  it('refuses to publish weights that do not sum to 100 %, naming the sum', async () => {
    const call = await draft({ weights: { basis: 'member', weights: [{ key: `${runId}:0`, pct: 50 }, { key: `${runId}:1`, pct: 40 }] } });
    const res = await publish(met, call.id);
    expect(res.status).toBe(400);
    const body = await res.json();
    expect(body.error.message).toMatch(/weights must sum to 100 %; they sum to 90 %/);
    const [row] = await t.db.db.select().from(regimeCalls).where(eq(regimeCalls.id, call.id));
    expect(row.state).toBe('draft');
    expect(await mailsFor(call.id)).toHaveLength(0);
    const badKeys = await draft({ weights: { basis: 'member', weights: [{ key: 'r:0', pct: 50 }, { key: `${runId}:7`, pct: 50 }] } });
    const res2 = await publish(met, badKeys.id);
    expect(res2.status).toBe(400);
    expect((await res2.json()).error.message).toContain('keyed "<run id>:<member>"; these are not: r:0');
  });

  it('a trader cannot create, save or publish a call (403)', async () => {
    const call = await draft();
    expect((await publish(trader, call.id)).status).toBe(403);
    expect((await trader.fetch('/api/regime-calls', { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: '{}' })).status).toBe(403);
    expect((await trader.fetch(`/api/regime-calls/${call.id}`, { method: 'PUT', headers: { 'Content-Type': 'application/json' }, body: '{}' })).status).toBe(403);
    const [row] = await t.db.db.select().from(regimeCalls).where(eq(regimeCalls.id, call.id));
    expect(row.state).toBe('draft');
  });

  it('saving a draft is audited once per save; publishing delivers the call to the subscribers over SMTP', async () => {
    const call = await draft();
    const save = await met.fetch(`/api/regime-calls/${call.id}`, {
      method: 'PUT',
      headers: { 'Content-Type': 'application/json' },
      body: JSON.stringify({
        validFrom: '2026-12-03',
        validTo: '2026-12-05',
        regimes: [{ from: '2026-12-03', to: '2026-12-05', regimeId: westerly }],
        confidence: 'medium',
        weights: { basis: 'member', weights: [{ key: `${runId}:0`, pct: 70 }, { key: `${runId}:1`, pct: 30 }] },
        keyRisks: 'Snow line uncertain.',
        narrative: `Wet westerly spell (${tag}).`,
      }),
    });
    expect(save.status).toBe(200);
    const saves = await t.db.db.select().from(auditEvents).where(and(eq(auditEvents.action, 'regime_call.save_draft'), eq(auditEvents.objectId, call.id)));
    expect(saves).toHaveLength(1);
    expect(saves[0].detail).toMatchObject({ changed: expect.arrayContaining(['confidence', 'weights', 'keyRisks', 'narrative']) });

    const preview = await (await met.fetch(`/api/regime-calls/${call.id}/preview`)).json();
    expect(preview.subject).toContain('Westerly flow');
    expect(preview.text).toContain('70.0 %');

    const res = await publish(met, call.id);
    expect(res.status).toBe(200);
    expect((await res.json()).call).toMatchObject({ state: 'published', version: 1 });
    // Queued in the publish transaction: one mail per recipient; the subscriber whose region the call does not reach gets none.
    const queued = await mailsFor(call.id);
    expect(queued.map((m) => m.recipients).flat()).toContain(subscriber);
    expect(queued.map((m) => m.recipients).flat()).not.toContain(otherRegion);

    const got = await caughtFor(preview.subject, 1);
    const mine = got.filter((m) => m.to.includes(subscriber));
    expect(mine).toHaveLength(1);
    expect(mine[0].subject).toBe('Regime call 2026-12-03 to 2026-12-05: Westerly flow, confidence medium');
    expect(mine[0].text).toContain(`Wet westerly spell (${tag}).`);
    expect(mine[0].text).toContain('Snow line uncertain.');
    for (const caution of CAUTIONS) {
      expect(mine[0].text).toContain(caution);
      expect(mine[0].html).toContain(caution);
    }
    expect(mine[0].html).toContain('Westerly flow');
    const audit = await t.db.db.select().from(auditEvents).where(and(eq(auditEvents.action, 'regime_call.publish'), eq(auditEvents.objectId, call.id)));
    expect(audit).toHaveLength(1);
  });

  it('the database refuses to change or delete a published version, even by direct SQL; the API answers 409', async () => {
    const call = await draft();
    expect((await publish(met, call.id)).status).toBe(200);
    await expect(t.db.pool.query("UPDATE regime_calls SET narrative = 'rewritten' WHERE id = $1", [call.id])).rejects.toThrow(/published: UPDATE is not allowed/);
    await expect(t.db.pool.query("UPDATE regime_calls SET state = 'draft' WHERE id = $1", [call.id])).rejects.toThrow(/UPDATE is not allowed/);
    await expect(t.db.pool.query('DELETE FROM regime_calls WHERE id = $1', [call.id])).rejects.toThrow(/DELETE is not allowed/);
    const [row] = await t.db.db.select().from(regimeCalls).where(eq(regimeCalls.id, call.id));
    expect(row.narrative).toContain(tag);
    const put = await met.fetch(`/api/regime-calls/${call.id}`, { method: 'PUT', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ validFrom: '2026-12-03', validTo: '2026-12-05' }) });
    expect(put.status).toBe(409);
    // A draft stays editable and deletable.
    const other = await draft();
    await t.db.pool.query("UPDATE regime_calls SET key_risks = 'x' WHERE id = $1", [other.id]);
    await t.db.pool.query('DELETE FROM regime_calls WHERE id = $1', [other.id]);
  });

  it('a correction is version 2 of the same series, linked to version 1 with its reason; both stay readable', async () => {
    const v1 = await draft();
    expect((await publish(met, v1.id)).status).toBe(200);
    const noReason = await met.fetch(`/api/regime-calls/${v1.id}/corrections`, { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: '{}' });
    expect(noReason.status).toBe(400);
    const res = await met.fetch(`/api/regime-calls/${v1.id}/corrections`, {
      method: 'POST',
      headers: { 'Content-Type': 'application/json' },
      body: JSON.stringify({ reason: 'The blocking high arrives a day earlier.' }),
    });
    expect(res.status).toBe(201);
    const v2 = (await res.json()).call;
    expect(v2).toMatchObject({ seriesId: v1.seriesId, version: 2, state: 'draft', correctionOf: v1.id, correctionReason: 'The blocking high arrives a day earlier.' });
    expect((await publish(met, v2.id)).status).toBe(200);
    const detail = await (await trader.fetch(`/api/regime-calls/${v2.id}`)).json();
    expect(detail.versions.map((v: { version: number; state: string }) => [v.version, v.state])).toEqual([
      [1, 'published'],
      [2, 'published'],
    ]);
    const old = await (await trader.fetch(`/api/regime-calls/${v1.id}`)).json();
    expect(old.call).toMatchObject({ version: 1, state: 'published' });
    const queued = await mailsFor(v2.id);
    expect(queued[0].subject).toMatch(/\(correction, version 2\)$/);
    expect(queued[0].textBody).toContain('Correction of the earlier version: The blocking high arrives a day earlier.');
  });

  it('renders the narrative with HTML and script escaped', async () => {
    const call = await draft({ narrative: '<script>alert(1)</script> and [x](javascript:alert(2)) <img src=x onerror=alert(3)>' });
    const detail = await (await met.fetch(`/api/regime-calls/${call.id}`)).json();
    expect(detail.narrativeHtml).not.toMatch(/<script|<img|href="javascript/i);
    expect(detail.narrativeHtml).toContain('&lt;script&gt;');
    const preview = await (await met.fetch(`/api/regime-calls/${call.id}/preview`)).json();
    expect(preview.html).not.toMatch(/<script|<img/i);
  });

  it('mails the subscribers of the linked runs\' regions, with the weighted P50 per region over the valid period', async () => {
    const region = `fjord-${tag}`;
    const near = `fjord-desk-${tag}@nordvale.example`;
    const far = `plains-desk-${tag}@nordvale.example`;
    // The real first calibration set (the defaults), shared with the other test files of this database.
    await ensureDefaultCalibrationSet(t.db.db);
    const cal = await latestCalibrationSet(t.db.db);
    const [run] = await t.db.db
      .insert(runs)
      .values({ checksum: randomBytes(32).toString('hex'), sizeBytes: 1, fileName: 'calls-test.nc', state: 'ready', isEnsemble: true, members: [0, 1, 2] })
      .returning();
    await t.db.db.insert(regions).values({ id: region, name: `Fjord ${tag}`, kind: 'hydro', properties: {}, geometry: {}, areaKm2: 100 });
    // Per-member daily precipitation 10, 20 and 40 mm on each of the three valid days: totals 30, 60 and 120 mm.
    const days = ['2026-12-03', '2026-12-04', '2026-12-05'];
    await t.db.db.insert(signalRows).values(
      [0, 1, 2].flatMap((member) =>
        days.map((day) => ({ runId: run.id, member, regionId: region, day, precipMm: [10, 20, 40][member], inflowGwh: 1, calibrationVersion: cal.version, codeVersion: 'test', inputChecksum: 'test' })),
      ),
    );
    await t.db.db.delete(subscriptions).where(inArray(subscriptions.email, [near, far]));
    await t.db.db.insert(subscriptions).values([
      { email: near, name: 'Fjord desk', regionIds: [region] },
      { email: far, name: 'Plains desk', regionIds: [`plains-${tag}`] },
    ]);
    try {
      const call = await draft({
        linkedRunIds: [run.id],
        weights: { basis: 'member', weights: [{ key: `${run.id}:0`, pct: 10 }, { key: `${run.id}:1`, pct: 10 }, { key: `${run.id}:2`, pct: 80 }] },
      });
      expect((await publish(met, call.id)).status).toBe(200);
      const queued = await mailsFor(call.id);
      const to = queued.flatMap((m) => m.recipients);
      expect(to).toContain(near);
      expect(to).toContain(subscriber);
      expect(to).not.toContain(far);
      // Weighted P50 by the rule of server/science/statistics.ts (weights 0.1, 0.1, 0.8 on 30, 60,
      // 120 mm: positions 0, 0.182, 1, so P50 = 60 + (0.5 - 0.182) / 0.818 * 60 = 83.3 mm, by hand);
      // equal weights would give the plain median, 60 mm.
      expect(queued[0].textBody).toContain(`Fjord ${tag} (3 d): precipitation 83.3 mm, inflow 3.00 GWh, solar –`);
      expect(queued[0].htmlBody).toContain(`Fjord ${tag}`);
    } finally {
      await t.db.db.delete(subscriptions).where(inArray(subscriptions.email, [near, far]));
      await t.db.db.delete(runs).where(eq(runs.id, run.id));
      await t.db.db.delete(regions).where(eq(regions.id, region));
    }
  });

  it('with the mail server down the mail stays queued, and goes out when the server returns', async () => {
    await catcher!.stop();
    catcher = null;
    const call = await draft({ narrative: `Held while the mail server is down (${tag}).` });
    const res = await publish(met, call.id);
    expect(res.status).toBe(200);
    await t.mail!.sender.kick();
    let [row] = (await mailsFor(call.id)).filter((m) => m.recipients.includes(subscriber));
    expect(row.state).toBe('pending');
    expect(row.attempts).toBeGreaterThanOrEqual(1);
    expect(row.lastError).toMatch(/ECONNREFUSED|connect/i);

    catcher = await startMailCatcher({ port, dir: path.join(dir, 'back') });
    // The sender retries after its back-off (5 s after the first failure); kick until it has.
    const until = Date.now() + 15_000;
    while (Date.now() < until) {
      await t.mail!.sender.kick();
      [row] = (await mailsFor(call.id)).filter((m) => m.recipients.includes(subscriber));
      if (row.state === 'sent') break;
      await new Promise((r) => setTimeout(r, 250));
    }
    expect(row.state).toBe('sent');
    const got = (await catcher.list()).filter((m) => m.to.includes(subscriber) && m.text.includes('Held while the mail server is down'));
    expect(got).toHaveLength(1);
  }, 30_000);
});
