import { describe, expect, it } from 'vitest';
import { compareSnapshots, type SnapshotRowView } from '../../../src/features/snapshots/compare.ts';

const row = (over: Partial<SnapshotRowView>): SnapshotRowView => ({
  runId: 'r1', model: 'M', cycle: '2026-12-01T00:00:00.000Z', member: 0, regionId: 'north', day: '2026-12-01',
  precipMm: 5, snowShare: 0.2, cloudPct: 60, ghiKwhM2: null, solarGwh: null, inflowGwh: 3, weight: 0.5, ...over,
});

describe('comparing two snapshots row by row', () => {
  it('names added, removed and changed rows with the changed values only', () => {
    const before = [row({ member: 0 }), row({ member: 1 }), row({ member: 2, precipMm: 4 })];
    const after = [row({ member: 0 }), row({ member: 2, precipMm: 6.5, weight: 0.25 }), row({ member: 3 })];
    const diff = compareSnapshots(before, after);
    expect({ added: diff.added, removed: diff.removed, changed: diff.changed, unchanged: diff.unchanged }).toEqual({ added: 1, removed: 1, changed: 1, unchanged: 1 });
    const changed = diff.rows.find((r) => r.kind === 'changed')!;
    expect(changed.member).toBe(2);
    expect(changed.changes).toEqual([
      { field: 'precipMm', before: 4, after: 6.5 },
      { field: 'weight', before: 0.5, after: 0.25 },
    ]);
    expect(diff.rows.find((r) => r.kind === 'removed')!.member).toBe(1);
    expect(diff.rows.find((r) => r.kind === 'added')!.member).toBe(3);
  });

  it('lines up a newer cycle of the same model and shows the cycle change; a value turning absent is a change', () => {
    const diff = compareSnapshots([row({})], [row({ runId: 'r2', cycle: '2026-12-01T12:00:00.000Z', inflowGwh: null })]);
    expect(diff.changed).toBe(1);
    expect(diff.rows[0].changes.map((c) => c.field)).toEqual(['cycle', 'inflowGwh']);
  });

  it('identical snapshots differ in nothing', () => {
    const rows = [row({ member: 0 }), row({ member: 1, regionId: 'south' })];
    expect(compareSnapshots(rows, rows.map((r) => ({ ...r })))).toMatchObject({ added: 0, removed: 0, changed: 0, unchanged: 2, rows: [] });
  });
});
