/**
 * Numbers with their units, formatted once for every screen. Figures use the monospace face
 * (class "num") so that columns line up.
 */
const formatters = new Map<string, Intl.NumberFormat>();

function formatter(digits: number): Intl.NumberFormat {
  const key = String(digits);
  let f = formatters.get(key);
  if (!f) {
    f = new Intl.NumberFormat('en-GB', { minimumFractionDigits: digits, maximumFractionDigits: digits });
    formatters.set(key, f);
  }
  return f;
}

export const UNITS = {
  mm: 'mm',
  pct: '%',
  gwh: 'GWh',
  paPerS: 'Pa/s',
  hpaPerH: 'hPa/h',
  hpa: 'hPa',
  kwhPerM2: 'kWh/m²',
  wPerM2: 'W/m²',
} as const;

export type Unit = (typeof UNITS)[keyof typeof UNITS];

/** "12.4 mm"; an absent value shows as an en dash, never as 0. */
export function formatValue(value: number | null | undefined, unit: Unit | '', digits = 1): string {
  if (value === null || value === undefined || Number.isNaN(value)) return '–';
  const text = formatter(digits).format(value);
  return unit ? `${text} ${unit}` : text;
}

/** A change with its sign always shown: "+3.2 mm", "−1.0 GWh". */
export function formatChange(value: number | null | undefined, unit: Unit | '', digits = 1): string {
  if (value === null || value === undefined || Number.isNaN(value)) return '–';
  const text = formatter(digits).format(Math.abs(value));
  const sign = value > 0 ? '+' : value < 0 ? '−' : '±';
  return unit ? `${sign}${text} ${unit}` : `${sign}${text}`;
}

/** Omega in Pa/s to hPa/h (1 Pa/s = 36 hPa/h). */
export function paPerSToHpaPerH(paPerS: number): number {
  return paPerS * 36;
}

export function formatBytes(bytes: number): string {
  const units = ['B', 'KB', 'MB', 'GB', 'TB'];
  let value = bytes;
  let i = 0;
  while (value >= 1000 && i < units.length - 1) {
    value /= 1000;
    i += 1;
  }
  return `${formatter(i === 0 ? 0 : 1).format(value)} ${units[i]}`;
}

/** "2026-12-01 00Z" for a model cycle; valid times likewise in UTC, as the desk reads them. */
export function formatCycle(iso: string): string {
  const d = new Date(iso);
  if (Number.isNaN(d.getTime())) return iso;
  const pad = (n: number) => String(n).padStart(2, '0');
  return `${d.getUTCFullYear()}-${pad(d.getUTCMonth() + 1)}-${pad(d.getUTCDate())} ${pad(d.getUTCHours())}Z`;
}
