/**
 * Spreadsheet exports of the scenario table: .xlsx through exceljs's streaming writer (sheets
 * Scenarios, Summary, About) and CSV, both written straight to the HTTP response in batches, so a
 * large filter never sits whole in memory as a workbook. Every export is audited before it starts.
 */
import type { Writable } from 'node:stream';
import ExcelJS from 'exceljs';
import { CAUTIONS } from '@shared/cautions.ts';
import { QUANTITY_LABELS, SCENARIO_QUANTITIES, type ScenarioFilter, type ScenarioRow, type ScenarioSummary } from '@shared/api/scenarios.ts';
import type { Database } from '../db/client.ts';
import { recordAudit, type AuditEventInput } from './audit.ts';
import { countRows, fetchRows, provenance, resolveScope, scenarioSummary, type Scope } from './scenarios.ts';

const BATCH = 5000;

interface Column {
  header: string;
  key: keyof ScenarioRow;
  width: number;
  numFmt?: string;
}

/** The Scenarios sheet's and the CSV's columns, units in the headers. */
export const EXPORT_COLUMNS: Column[] = [
  { header: 'Region id', key: 'regionId', width: 14 },
  { header: 'Region', key: 'region', width: 22 },
  { header: 'Kind', key: 'kind', width: 8 },
  { header: 'Day (UTC)', key: 'day', width: 12 },
  { header: 'Model', key: 'model', width: 10 },
  { header: 'Cycle (UTC)', key: 'cycle', width: 22 },
  { header: 'Run id', key: 'runId', width: 38 },
  { header: 'Member', key: 'member', width: 8, numFmt: '0' },
  { header: 'Precipitation (mm)', key: 'precipMm', width: 12, numFmt: '0.0' },
  { header: 'Anomaly (mm)', key: 'anomalyMm', width: 12, numFmt: '+0.0;-0.0;0.0' },
  { header: 'Snow share (0-1)', key: 'snowShare', width: 12, numFmt: '0.00' },
  { header: 'Cloud (%)', key: 'cloudPct', width: 10, numFmt: '0' },
  { header: 'GHI (kWh/m2)', key: 'ghiKwhM2', width: 12, numFmt: '0.00' },
  { header: 'Solar (GWh)', key: 'solarGwh', width: 12, numFmt: '0.000' },
  { header: 'Inflow (GWh)', key: 'inflowGwh', width: 12, numFmt: '0.000' },
  { header: 'Hours covered (h)', key: 'hoursCovered', width: 10, numFmt: '0' },
  { header: 'Weight (%)', key: 'weightPct', width: 10, numFmt: '0.00' },
];

export interface ExportRequest {
  filter: ScenarioFilter;
  sort: { sort: string; dir: 'asc' | 'desc' };
  who: Pick<AuditEventInput, 'actorId' | 'actorLabel' | 'requestId' | 'clientAddress'>;
  codeVersion: string;
}

export interface PreparedExport {
  scope: Scope;
  total: number;
}

/** Resolves the scope, counts the rows and records the audit event; the caller then streams. */
export async function prepareExport(db: Database, format: 'xlsx' | 'csv', req: ExportRequest): Promise<PreparedExport> {
  const scope = await resolveScope(db, req.filter);
  const total = await countRows(db, req.filter, scope);
  await recordAudit(db, {
    ...req.who,
    action: 'scenarios.export',
    objectType: 'scenarios',
    objectId: format,
    detail: { format, rows: total, filter: req.filter, runIds: scope.runs.map((r) => r.id), weights: scope.weights },
  });
  return { scope, total };
}

async function* rowBatches(db: Database, req: ExportRequest, scope: Scope): AsyncGenerator<ScenarioRow[]> {
  const sort = req.sort as Parameters<typeof fetchRows>[3];
  for (let offset = 0; ; offset += BATCH) {
    const rows = await fetchRows(db, req.filter, scope, { ...sort, offset, limit: BATCH });
    if (rows.length) yield rows;
    if (rows.length < BATCH) return;
  }
}

function csvField(value: unknown): string {
  if (value === null || value === undefined) return '';
  const text = typeof value === 'number' ? String(value) : String(value);
  return /[",\n\r]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/**
 * CSV: the header line, one line per row (numbers in full precision, empty where absent), then the
 * cautions as lines starting with "#" so that readers which skip comments can.
 */
export async function writeCsv(db: Database, req: ExportRequest, prepared: PreparedExport, out: Writable): Promise<void> {
  const write = (line: string) => (out.write(line) ? Promise.resolve() : new Promise<void>((r) => out.once('drain', () => r())));
  await write(EXPORT_COLUMNS.map((c) => csvField(c.header)).join(',') + '\r\n');
  for await (const batch of rowBatches(db, req, prepared.scope)) {
    await write(batch.map((row) => EXPORT_COLUMNS.map((c) => csvField(row[c.key])).join(',')).join('\r\n') + '\r\n');
  }
  await write(CAUTIONS.map((c) => `# ${c}`).join('\r\n') + '\r\n');
  out.end();
}

function columnLetter(n: number): string {
  let s = '';
  for (let i = n; i > 0; i = Math.floor((i - 1) / 26)) s = String.fromCharCode(65 + ((i - 1) % 26)) + s;
  return s;
}

function headerRow(sheet: ExcelJS.Worksheet, width: number): void {
  const row = sheet.getRow(1);
  row.font = { bold: true };
  row.commit();
  sheet.autoFilter = { from: 'A1', to: `${columnLetter(width)}1` };
}

async function writeScenarioSheet(wb: ExcelJS.stream.xlsx.WorkbookWriter, db: Database, req: ExportRequest, scope: Scope): Promise<void> {
  const sheet = wb.addWorksheet('Scenarios', { views: [{ state: 'frozen', ySplit: 1 }] });
  sheet.columns = EXPORT_COLUMNS.map((c) => ({ header: c.header, key: c.key, width: c.width }));
  headerRow(sheet, EXPORT_COLUMNS.length);
  // One style object per column, shared by all its cells: exceljs recognises a style object it has
  // seen (by identity) instead of rendering and looking it up for each of the 850,000 cells.
  const styles = EXPORT_COLUMNS.map((c) => (c.numFmt ? { numFmt: c.numFmt } : null));
  for await (const batch of rowBatches(db, req, scope)) {
    for (const row of batch) {
      const added = sheet.addRow(EXPORT_COLUMNS.map((c) => row[c.key]));
      styles.forEach((style, i) => {
        if (style) added.getCell(i + 1).style = style;
      });
      added.commit();
    }
  }
  sheet.commit();
}

const SUMMARY_PARTS = [
  ['p10', 'P10'],
  ['p50', 'P50'],
  ['p90', 'P90'],
  ['previousP50', 'previous-cycle P50'],
  ['changeP50', 'change of P50'],
] as const;

/** The Summary sheet's header texts (region, kind, day, scenario count, then five per quantity). */
export function summaryHeaders(): string[] {
  const head = ['Region id', 'Region', 'Kind', 'Day (UTC)', 'Scenarios'];
  for (const q of SCENARIO_QUANTITIES) {
    const { label, unit } = QUANTITY_LABELS[q];
    for (const [, name] of SUMMARY_PARTS) head.push(`${label} ${name} (${unit})`);
  }
  return head;
}

function writeSummarySheet(wb: ExcelJS.stream.xlsx.WorkbookWriter, summary: ScenarioSummary): void {
  const sheet = wb.addWorksheet('Summary', { views: [{ state: 'frozen', ySplit: 1 }] });
  const headers = summaryHeaders();
  sheet.columns = headers.map((header, i) => ({ header, width: i < 5 ? 14 : 12, style: i >= 4 ? { numFmt: i === 4 ? '0' : '0.00' } : {} }));
  headerRow(sheet, headers.length);
  for (const r of summary.rows) {
    const values: Array<string | number | null> = [r.regionId, r.region, r.kind, r.day, r.scenarios];
    for (const q of SCENARIO_QUANTITIES) for (const [part] of SUMMARY_PARTS) values.push(r.stats[q][part]);
    sheet.addRow(values).commit();
  }
  sheet.commit();
}

async function writeAboutSheet(wb: ExcelJS.stream.xlsx.WorkbookWriter, db: Database, req: ExportRequest, prepared: PreparedExport, summary: ScenarioSummary): Promise<void> {
  const sheet = wb.addWorksheet('About');
  sheet.columns = [{ width: 28 }, { width: 100 }];
  const line = (a: string, b: string | number = '') => sheet.addRow([a, b]).commit();
  line('Liftwise scenario export');
  line('Exported at (UTC)', new Date().toISOString());
  line('Exported by', req.who.actorLabel);
  line('Code version', req.codeVersion);
  line('Rows', prepared.total);
  line('Filters', JSON.stringify(req.filter));
  line('Sort', `${req.sort.sort} ${req.sort.dir}`);
  const w = prepared.scope.weights;
  line('Weights', w.kind === 'call' ? `latest published regime call ${w.callId} (published ${w.publishedAt})` : 'equal per run (no published call names these runs)');
  line('Percentiles', 'weighted P10/P50/P90 across scenarios; equal weights give Hyndman and Fan (1996) type 7 (numpy.percentile linear)');
  line('Anomaly', "precipitation minus the region's monthly climatology (mm/day) scaled to the hours covered");
  for (const r of prepared.scope.runs) line('Run', `${r.id}  ${r.model}  cycle ${r.cycle}  ${r.isEnsemble ? 'ensemble' : 'deterministic'}`);
  for (const r of summary.previousRuns) line('Previous-cycle run', `${r.id}  ${r.model}  cycle ${r.cycle}`);
  for (const p of await provenance(db, prepared.scope)) {
    line('Input', `run ${p.runId}  input checksum ${p.inputChecksum}  calibration set v${p.calibrationVersion}  code ${p.codeVersion}`);
  }
  line('');
  for (const c of CAUTIONS) line('Caution', c);
  sheet.commit();
}

/** The workbook, streamed to `out` (the HTTP response). */
export async function writeXlsx(db: Database, req: ExportRequest, prepared: PreparedExport, out: Writable): Promise<void> {
  // fast deflate: the sheet is numbers and repeated ids; level 1 costs little size and much less time
  const wb = new ExcelJS.stream.xlsx.WorkbookWriter({ stream: out, useStyles: true, useSharedStrings: false, zip: { zlib: { level: 1 } } });
  wb.creator = 'Liftwise';
  // the summary's reads run while the rows are being written
  const pending = scenarioSummary(db, req.filter);
  pending.catch(() => {});
  await writeScenarioSheet(wb, db, req, prepared.scope);
  const summary = await pending;
  writeSummarySheet(wb, summary);
  await writeAboutSheet(wb, db, req, prepared, summary);
  await wb.commit();
}
