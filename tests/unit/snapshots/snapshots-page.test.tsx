import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { fireEvent, render, screen, within } from '@testing-library/react';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { SnapshotsPage } from '@/features/snapshots/SnapshotsPage.tsx';

const HASH_A = 'a1'.repeat(32);
const HASH_B = 'b2'.repeat(32);
const summary = { filters: {}, models: ['NVM-ENS'], runCount: 1, rowCount: 2, regionCount: 1, dayFrom: '2026-12-01', dayTo: '2026-12-01', regimeCall: { id: 'c', version: 3 }, trigger: 'manual' };
const item = (id: number, hash: string, previousHash: string | null) => ({ id, sealedAt: `2026-12-01T0${id}:00:00.000Z`, sealedBy: 'Rhea Risk', sealedById: 'u1', summary, hash, shortHash: hash.slice(0, 12), previousHash, keyId: '0123456789abcdef' });
const row = (member: number, precipMm: number) => ({ runId: 'r', model: 'NVM-ENS', cycle: '2026-12-01T00:00:00.000Z', member, regionId: 'north', day: '2026-12-01', precipMm, snowShare: 0, cloudPct: 50, ghiKwhM2: null, solarGwh: null, inflowGwh: 2, weight: 0.5, calibrationVersion: 1 });
const doc = (hash: string, rows: unknown[]) => ({
  version: 1, content: { rows }, sealedAt: '2026-12-01T01:00:00.000Z', sealedBy: 'Rhea Risk', previousHash: null, contentHash: 'c'.repeat(64), hash,
  signature: `${'A'.repeat(86)}==`, keyId: '0123456789abcdef', algorithm: 'Ed25519',
});

let roles: string[];
let posted: unknown[];

const json = (body: unknown, status = 200) => new Response(JSON.stringify(body), { status });

beforeEach(() => {
  roles = ['risk'];
  posted = [];
  vi.stubGlobal(
    'fetch',
    vi.fn(async (input: RequestInfo | URL, init?: RequestInit) => {
      const url = new URL(String(input), 'http://localhost');
      const p = url.pathname;
      if (p === '/api/me') return json({ id: 'u1', name: 'Rhea Risk', email: 'r@nordvale.example', roles, csrfToken: 't' });
      if (p === '/api/runs') return json({ runs: [{ model: 'NVM-ENS' }] });
      if (p === '/api/snapshots' && init?.method === 'POST') {
        posted.push(JSON.parse(String(init.body)));
        return json({ snapshot: item(3, 'c3'.repeat(32), HASH_B) }, 201);
      }
      if (p === '/api/snapshots') return json({ snapshots: [item(2, HASH_B, HASH_A), item(1, HASH_A, null)], total: 2 });
      if (p === '/api/snapshots/verify-chain') return json({ valid: true, checked: 2, firstBroken: null });
      if (p === '/api/snapshots/public-key') return json({ publicKey: '-----BEGIN PUBLIC KEY-----\nMCow\n-----END PUBLIC KEY-----\n', keyId: '0123456789abcdef', algorithm: 'Ed25519' });
      if (p === '/api/snapshots/2/verify') {
        return json({
          id: 2, valid: false,
          checks: [
            { name: 'format', ok: true, detail: 'sealed snapshot v1' },
            { name: 'content-hash', ok: false, detail: 'content hashes to 1234…' },
            { name: 'hash', ok: true, detail: 'header SHA-256' },
            { name: 'signature', ok: true, detail: 'Ed25519 signature verifies' },
            { name: 'chain', ok: true, detail: 'links to previous snapshot' },
          ],
          chain: { valid: false, checked: 1, firstBroken: { id: 2, shortHash: HASH_B.slice(0, 12), check: 'content-hash', detail: 'content hashes to 1234…' } },
        });
      }
      if (p === '/api/snapshots/1') return json({ snapshot: { ...item(1, HASH_A, null), document: doc(HASH_A, [row(0, 4), row(1, 6)]) } });
      if (p === '/api/snapshots/2') return json({ snapshot: { ...item(2, HASH_B, HASH_A), document: doc(HASH_B, [row(0, 4), row(1, 9.5)]) } });
      if (p === '/api/audit') return json({ events: [{ id: 7, at: '2026-12-01T03:30:00.000Z', actorId: 'u1', actorLabel: 'Rhea Risk', action: 'snapshot.seal', objectType: 'snapshot', objectId: '2', detail: {}, requestId: null, clientAddress: null, hash: 'd'.repeat(64) }], total: 1 });
      if (p === '/api/audit/verify') return json({ ok: true, checked: 7, firstBroken: null });
      return json({ error: { code: 'not_found', message: `no mock for ${p}` } }, 404);
    }),
  );
});
afterEach(() => vi.unstubAllGlobals());

function renderPage() {
  const client = new QueryClient({ defaultOptions: { queries: { retry: false } } });
  render(
    <QueryClientProvider client={client}>
      <SnapshotsPage />
    </QueryClientProvider>,
  );
}

describe('the Snapshots screen', () => {
  it('lists who sealed what and when with the short hash, and shows each verify check ok or FAIL', async () => {
    renderPage();
    expect(await screen.findByText(HASH_B.slice(0, 12))).toBeInTheDocument();
    expect(screen.getAllByText('Rhea Risk').length).toBeGreaterThan(0);
    expect(screen.getByText('2026-12-01 02:00:00 UTC', { selector: 'td' })).toBeInTheDocument();
    expect(await screen.findByText(/Snapshot chain holds: 2 snapshot/)).toBeInTheDocument();
    expect(await screen.findByText(/Audit trail holds: 7 event/)).toBeInTheDocument();
    fireEvent.click(screen.getAllByRole('button', { name: 'Verify' })[0]);
    expect(await screen.findByText('This snapshot does NOT verify.')).toBeInTheDocument();
    const failed = screen.getByText('content-hash', { selector: 'span' }).closest('li')!;
    expect(within(failed).getByText('FAIL')).toBeInTheDocument();
    expect(screen.getByText('signature', { selector: 'span' }).closest('li')!).toHaveTextContent('ok');
    expect(screen.getAllByRole('link', { name: 'JSON' })[0]).toHaveAttribute('href', '/api/snapshots/2/export.json');
  });

  it('compares two ticked snapshots: the changed row with both values and the change, with units', async () => {
    renderPage();
    fireEvent.click(await screen.findByRole('checkbox', { name: 'Compare snapshot 1' }));
    fireEvent.click(screen.getByRole('checkbox', { name: 'Compare snapshot 2' }));
    expect(await screen.findByText('Comparison: #1 → #2')).toBeInTheDocument();
    expect((await screen.findByText(/Rows matched by model/)).textContent).toMatch(/0 added, 0 removed, 1 changed, 1 unchanged/);
    expect(screen.getByText(/6\.0 mm\/day → 9\.5 mm\/day/)).toBeInTheDocument();
    expect(screen.getByText('(+3.5 mm)')).toHaveClass('text-ascent-strong');
  });

  it('a risk manager seals with the chosen filters and sees the short hash', async () => {
    renderPage();
    fireEvent.change(await screen.findByLabelText('Models (comma-separated)'), { target: { value: 'NVM-ENS' } });
    fireEvent.change(screen.getByLabelText('Kind'), { target: { value: 'hydro' } });
    fireEvent.click(screen.getByRole('button', { name: 'Seal snapshot' }));
    expect(await screen.findByText('c3'.repeat(6))).toBeInTheDocument();
    expect(posted).toEqual([{ filters: { models: ['NVM-ENS'], kind: 'hydro' } }]);
  });

  it('a trader gets no Seal panel and no list, only the seal key', async () => {
    roles = ['trader'];
    renderPage();
    expect(await screen.findByText('Snapshots are for risk managers and admins')).toBeInTheDocument();
    expect(screen.queryByRole('button', { name: 'Seal snapshot' })).toBeNull();
    expect(await screen.findByText(/BEGIN PUBLIC KEY/)).toBeInTheDocument();
  });

  it('an admin reads and verifies but cannot seal', async () => {
    roles = ['admin'];
    renderPage();
    expect(await screen.findByText(HASH_A.slice(0, 12))).toBeInTheDocument();
    expect(screen.queryByRole('button', { name: 'Seal snapshot' })).toBeNull();
  });
});
