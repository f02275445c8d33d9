import { z } from 'zod';

/**
 * One regional signal row: a run's member, a region, a UTC day (the scenario table's grain).
 * Units: precipitation mm per day, snow share 0..1, cloud % (0..100), GHI kWh/m2 per day,
 * energies GWh per day. Model columns are null where the file carried no such field.
 */
export const signalRowSchema = z.object({
  runId: z.uuid(),
  member: z.number().int(),
  regionId: z.string(),
  day: z.string().regex(/^\d{4}-\d{2}-\d{2}$/),
  precipMm: z.number().nullable(),
  snowShare: z.number().nullable(),
  cloudPct: z.number().nullable(),
  ghiKwhM2: z.number().nullable(),
  solarGwh: z.number().nullable(),
  inflowGwh: z.number().nullable(),
  modelPrecipMm: z.number().nullable(),
  modelCloudPct: z.number().nullable(),
  hoursCovered: z.number(),
  calibrationVersion: z.number().int(),
  codeVersion: z.string(),
  inputChecksum: z.string(),
});
export type SignalRow = z.infer<typeof signalRowSchema>;

/** GET /api/runs/:id/signals[?member=N]: the run's regional daily signals. */
export const runSignalsSchema = z.object({ rows: z.array(signalRowSchema) });
