/** Units and colours of the sealed quantities, as the Snapshots screen shows them. */
import { formatChange, formatValue } from '@/lib/format.ts';
import type { ComparedField } from './compare.ts';

interface FieldView {
  label: string;
  /** formats a sealed value with its unit */
  value: (v: number | null) => string;
  change: (v: number | null) => string;
  /** which way is "wetter / cloudier" (teal); the other way is amber; null: no meaning colour */
  wetterWhenUp: boolean | null;
}

const pct = (v: number | null) => (v === null ? null : v * 100);

export const FIELD_VIEWS: Record<ComparedField, FieldView> = {
  precipMm: { label: 'Precipitation', value: (v) => `${formatValue(v, 'mm')}/day`, change: (v) => formatChange(v, 'mm'), wetterWhenUp: true },
  snowShare: { label: 'Snow share', value: (v) => formatValue(pct(v), '%', 0), change: (v) => formatChange(pct(v), '%', 0), wetterWhenUp: true },
  cloudPct: { label: 'Cloud', value: (v) => formatValue(v, '%', 0), change: (v) => formatChange(v, '%', 0), wetterWhenUp: true },
  ghiKwhM2: { label: 'GHI', value: (v) => `${formatValue(v, 'kWh/m²', 2)}/day`, change: (v) => formatChange(v, 'kWh/m²', 2), wetterWhenUp: false },
  solarGwh: { label: 'Solar', value: (v) => `${formatValue(v, 'GWh', 2)}/day`, change: (v) => formatChange(v, 'GWh', 2), wetterWhenUp: false },
  inflowGwh: { label: 'Inflow', value: (v) => `${formatValue(v, 'GWh', 2)}/day`, change: (v) => formatChange(v, 'GWh', 2), wetterWhenUp: true },
  weight: { label: 'Weight', value: (v) => formatValue(pct(v), '%', 1), change: (v) => formatChange(pct(v), '%', 1), wetterWhenUp: null },
};

/** Teal for a change towards wetter / cloudier, amber towards drier / sunnier. */
export function changeClass(field: ComparedField, change: number | null): string {
  const view = FIELD_VIEWS[field];
  if (change === null || change === 0 || view.wetterWhenUp === null) return 'text-ink-muted';
  const wetter = change > 0 === view.wetterWhenUp;
  return wetter ? 'text-ascent-strong dark:text-ascent-mid' : 'text-descent-strong dark:text-descent-mid';
}

/** "2026-12-01 07:42:10 UTC" */
export function formatUtc(iso: string): string {
  const d = new Date(iso);
  return Number.isNaN(d.getTime()) ? iso : `${d.toISOString().slice(0, 19).replace('T', ' ')} UTC`;
}
