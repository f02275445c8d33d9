/**
 * Which scenario rows changed between two sealed snapshots. Rows are matched by model, member,
 * region and day, so a newer cycle of the same model lines up with the older one; a different
 * run or cycle for the same key counts as a change and is shown.
 */
export const COMPARED_FIELDS = ['precipMm', 'snowShare', 'cloudPct', 'ghiKwhM2', 'solarGwh', 'inflowGwh', 'weight'] as const;
export type ComparedField = (typeof COMPARED_FIELDS)[number];

export interface SnapshotRowView {
  runId: string;
  model: string | null;
  cycle: string | null;
  member: number;
  regionId: string;
  day: string;
  precipMm: number | null;
  snowShare: number | null;
  cloudPct: number | null;
  ghiKwhM2: number | null;
  solarGwh: number | null;
  inflowGwh: number | null;
  weight: number;
}

export interface FieldChange {
  field: ComparedField | 'cycle';
  before: number | string | null;
  after: number | string | null;
}

export interface RowDiff {
  key: string;
  model: string | null;
  member: number;
  regionId: string;
  day: string;
  kind: 'added' | 'removed' | 'changed';
  changes: FieldChange[];
}

export interface SnapshotDiff {
  added: number;
  removed: number;
  changed: number;
  unchanged: number;
  rows: RowDiff[];
}

const keyOf = (r: SnapshotRowView) => `${r.model ?? '?'}|${r.member}|${r.regionId}|${r.day}`;

/** Rows out of a sealed document's content (anything without a rows array gives none). */
export function rowsOf(content: Record<string, unknown>): SnapshotRowView[] {
  return Array.isArray(content.rows) ? (content.rows as SnapshotRowView[]) : [];
}

/** The differences from `before` to `after`; values equal within `tolerance` count as unchanged. */
export function compareSnapshots(before: SnapshotRowView[], after: SnapshotRowView[], tolerance = 1e-9): SnapshotDiff {
  const old = new Map(before.map((r) => [keyOf(r), r]));
  const seen = new Set<string>();
  const rows: RowDiff[] = [];
  let unchanged = 0;
  for (const r of after) {
    const key = keyOf(r);
    seen.add(key);
    const base = { key, model: r.model, member: r.member, regionId: r.regionId, day: r.day };
    const o = old.get(key);
    if (!o) {
      rows.push({ ...base, kind: 'added', changes: COMPARED_FIELDS.map((field) => ({ field, before: null, after: r[field] })) });
      continue;
    }
    const changes: FieldChange[] = [];
    if (o.cycle !== r.cycle) changes.push({ field: 'cycle', before: o.cycle, after: r.cycle });
    for (const field of COMPARED_FIELDS) {
      const a = o[field];
      const b = r[field];
      const same = a === null || b === null ? a === b : Math.abs(a - b) <= tolerance;
      if (!same) changes.push({ field, before: a, after: b });
    }
    if (changes.length) rows.push({ ...base, kind: 'changed', changes });
    else unchanged += 1;
  }
  for (const [key, o] of old) {
    if (seen.has(key)) continue;
    rows.push({ key, model: o.model, member: o.member, regionId: o.regionId, day: o.day, kind: 'removed', changes: COMPARED_FIELDS.map((field) => ({ field, before: o[field], after: null })) });
  }
  rows.sort((a, b) => (a.key < b.key ? -1 : a.key > b.key ? 1 : 0));
  return {
    added: rows.filter((r) => r.kind === 'added').length,
    removed: rows.filter((r) => r.kind === 'removed').length,
    changed: rows.filter((r) => r.kind === 'changed').length,
    unchanged,
    rows,
  };
}
