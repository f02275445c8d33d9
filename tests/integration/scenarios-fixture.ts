/**
 * A small hand-made scenario set for the Scenarios tests, inserted directly (the pipeline that
 * normally fills signal_rows is not needed here). Region and model names are unique per call so
 * that other test files' rows in the same database never mix in.
 *
 *   model E (ensemble): cycle C1 members 1, 2, 3 and the previous cycle C0 members 1, 2, 3
 *   model D (deterministic): cycle C1 member 0 only
 *   a later model-E run that has no signal rows yet (still diagnosing): never in scope
 *   regions H (hydro, December climatology 2.0 mm/day) and S (solar, no climatology)
 *   days DAY1 and DAY2
 */
import { randomUUID } from 'node:crypto';
import type { Database } from '../../server/db/client.ts';
import { regionClimatology, regions, runs, signalRows } from '../../server/db/schema.ts';
import { ensureDefaultCalibrationSet, latestCalibrationSet } from '../../server/services/calibration.ts';

export const DAY1 = '2026-12-02';
export const DAY2 = '2026-12-03';
export const C1 = '2026-12-01T00:00:00.000Z';
export const C0 = '2026-11-30T12:00:00.000Z';

/** precipitation (mm) by run key, region key, day, member: the numbers the tests hand-compute with */
export const PRECIP = {
  E1: { H: { [DAY1]: [1, 4, 10], [DAY2]: [0, 2, 2] }, S: { [DAY1]: [0.5, 0.5, 6], [DAY2]: [3, 1, 2] } },
  E0: { H: { [DAY1]: [2, 3, 5], [DAY2]: [1, 1, 1] }, S: { [DAY1]: [0, 1, 2], [DAY2]: [2, 2, 2] } },
  D1: { H: { [DAY1]: [7], [DAY2]: [4] }, S: { [DAY1]: [1], [DAY2]: [0] } },
} as const;

export interface Fixture {
  tag: string;
  modelE: string;
  modelD: string;
  regionH: string;
  regionS: string;
  runE1: string;
  runE0: string;
  runD1: string;
  runLater: string;
  calibrationVersion: number;
  checksums: Record<'E1' | 'E0' | 'D1', string>;
}

export async function seedScenarioFixture(db: Database): Promise<Fixture> {
  const tag = randomUUID().slice(0, 8);
  const f = {
    tag,
    modelE: `E${tag}`,
    modelD: `D${tag}`,
    regionH: `h-${tag}`,
    regionS: `s-${tag}`,
    runE1: randomUUID(),
    runE0: randomUUID(),
    runD1: randomUUID(),
    runLater: randomUUID(),
    checksums: { E1: `e1${tag}`.padEnd(64, '1'), E0: `e0${tag}`.padEnd(64, '0'), D1: `d1${tag}`.padEnd(64, 'd') },
  };
  // The real first calibration set (the defaults), shared with the other test files of this database.
  await ensureDefaultCalibrationSet(db);
  const cal = await latestCalibrationSet(db);
  const square = { type: 'Polygon', coordinates: [[[10, 60], [11, 60], [11, 61], [10, 61], [10, 60]]] };
  await db.insert(regions).values([
    { id: f.regionH, name: `Alpha Fjell ${tag}`, kind: 'hydro', properties: {}, geometry: square, areaKm2: 5000 },
    { id: f.regionS, name: `Bravo Slette ${tag}`, kind: 'solar', properties: {}, geometry: square, areaKm2: 3000 },
  ]);
  await db.insert(regionClimatology).values({ regionId: f.regionH, month: 12, precipMmPerDay: 2 });
  const run = (id: string, model: string, cycle: string, members: number[], isEnsemble: boolean, state: 'ready' | 'diagnosing' = 'ready') => ({
    id,
    checksum: randomUUID().replace(/-/g, '') + tag,
    sizeBytes: 1000,
    fileName: `${model}.grib2`,
    model,
    cycle: new Date(cycle),
    members,
    isEnsemble,
    state,
  });
  await db.insert(runs).values([
    run(f.runE1, f.modelE, C1, [1, 2, 3], true),
    run(f.runE0, f.modelE, C0, [1, 2, 3], true),
    run(f.runD1, f.modelD, C1, [0], false),
    run(f.runLater, f.modelE, '2026-12-01T12:00:00.000Z', [1, 2, 3], true, 'diagnosing'),
  ]);
  const rows: (typeof signalRows.$inferInsert)[] = [];
  const runIds = { E1: f.runE1, E0: f.runE0, D1: f.runD1 } as const;
  for (const key of ['E1', 'E0', 'D1'] as const) {
    const members = key === 'D1' ? [0] : [1, 2, 3];
    for (const rk of ['H', 'S'] as const) {
      for (const day of [DAY1, DAY2]) {
        members.forEach((member, i) => {
          const precip = (PRECIP[key][rk] as Record<string, readonly number[]>)[day][i];
          rows.push({
            runId: runIds[key],
            member,
            regionId: rk === 'H' ? f.regionH : f.regionS,
            day,
            precipMm: precip,
            snowShare: rk === 'H' ? 0.25 : 0,
            cloudPct: 40 + 10 * i,
            ghiKwhM2: rk === 'S' ? 1 + 0.5 * i : null,
            solarGwh: rk === 'S' ? 2 - 0.5 * i : null,
            inflowGwh: rk === 'H' ? 3 * precip : null,
            // one partial day: its anomaly uses half the climatology
            hoursCovered: key === 'E1' && rk === 'H' && day === DAY2 && member === 1 ? 12 : 24,
            calibrationVersion: cal.version,
            codeVersion: `0.1.0+test${tag}`,
            inputChecksum: f.checksums[key],
          });
        });
      }
    }
  }
  await db.insert(signalRows).values(rows);
  return { ...f, calibrationVersion: cal.version };
}
