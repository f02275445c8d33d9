/**
 * Pure ECharts option builders of the Run view (testable without a canvas): cross-section,
 * sigma profile, QG-versus-model correlation, regional signal small multiples.
 */
import type { Section } from '@shared/api/run-view.ts';
import type { SignalRow } from '@shared/api/signals.ts';
import { gridCells } from '@/components/charts/geo.ts';
import { renderCell } from '@/components/charts/map-option.ts';
import { axisStyle, omegaColorsFor, seriesColors, tooltipStyle, type ChartFrame } from '@/lib/chart-theme.ts';
import { formatValue, paPerSToHpaPerH } from '@/lib/format.ts';

const pad = (n: number) => String(n).padStart(2, '0');

/** "2026-12-01 06Z (+6 h)": valid time in UTC with the lead time. */
export function formatValidTime(iso: string, step: number): string {
  const d = new Date(iso);
  return `${d.getUTCFullYear()}-${pad(d.getUTCMonth() + 1)}-${pad(d.getUTCDate())} ${pad(d.getUTCHours())}Z (+${step} h)`;
}

/** Omega in both units the desk reads, and what the sign means (negative omega = ascent). */
export function describeOmega(paPerS: number): string {
  const sense = paPerS < 0 ? 'ascent' : paPerS > 0 ? 'descent' : 'no vertical motion';
  return `${formatValue(paPerS, 'Pa/s', 3)} (${formatValue(paPerSToHpaPerH(paPerS), 'hPa/h', 1)}), ${sense}`;
}

/** Legend labels at the ends of the omega scale, top (positive, descent) first. */
export function omegaLegendText(range: { min: number; max: number }): [string, string] {
  const both = (v: number) => `${v > 0 ? '+' : ''}${formatValue(v, 'Pa/s', 2)}\n${v > 0 ? '+' : ''}${formatValue(paPerSToHpaPerH(v), 'hPa/h', 0)}`;
  return [`descent\n${both(range.max)}`, `${both(range.min)}\nascent`];
}

export function buildSectionOption(section: Section, range: { min: number; max: number }, frame: ChartFrame, dark = false): Record<string, unknown> {
  const axis = axisStyle(frame);
  const npts = section.distanceKm.length;
  const flat: (number | null)[] = new Array(section.levelsHpa.length * npts);
  section.values.forEach((row, k) => row.forEach((v, i) => (flat[k * npts + i] = v)));
  const pMax = Math.max(...section.levelsHpa);
  const pMin = Math.min(...section.levelsHpa);
  return {
    animation: false,
    grid: { left: 64, right: 120, top: 12, bottom: 40 },
    xAxis: {
      type: 'value',
      name: 'distance (km)',
      nameLocation: 'middle',
      nameGap: 26,
      min: 0,
      max: Math.ceil(section.distanceKm[npts - 1]),
      ...axis,
      splitLine: { show: false },
      axisLabel: { ...axis.axisLabel, showMaxLabel: false, formatter: (v: number) => String(Math.round(v)) },
    },
    yAxis: { type: 'value', name: 'pressure (hPa)', nameLocation: 'middle', nameGap: 44, inverse: true, min: pMin, max: pMax, ...axis, splitLine: { show: false } },
    visualMap: {
      type: 'continuous',
      seriesIndex: 0,
      dimension: 4,
      min: range.min,
      max: range.max,
      inRange: { color: [...omegaColorsFor(dark)] },
      calculable: false,
      right: 4,
      top: 'middle',
      itemHeight: 140,
      itemWidth: 14,
      text: omegaLegendText(range),
      textGap: 6,
      textStyle: { color: frame.muted, fontFamily: frame.fontMono, fontSize: 10, lineHeight: 13 },
    },
    tooltip: {
      trigger: 'item',
      ...tooltipStyle(frame),
      formatter: (p: { value: number[] }) => `${Math.round(p.value[5])} km, ${p.value[6]} hPa<br/>${describeOmega(p.value[4])}`,
    },
    series: [
      {
        id: 'section',
        type: 'custom',
        renderItem: renderCell,
        data: gridCells(section.distanceKm, section.levelsHpa, flat).map((c) => {
          // Cells stop at the top and bottom levels rather than reaching past them.
          c[2] = Math.min(pMax, Math.max(pMin, c[2]));
          c[3] = Math.min(pMax, Math.max(pMin, c[3]));
          return c;
        }),
        encode: { x: [0, 1], y: [2, 3], tooltip: 4 },
        clip: true,
      },
    ],
  };
}

/** Static stability against pressure (inverted axis, so up is up), linear or log sigma. */
export function buildSigmaOption(levelsHpa: number[], sigma: number[], log: boolean, frame: ChartFrame): Record<string, unknown> {
  const axis = axisStyle(frame);
  const positive = sigma.filter((s) => s > 0);
  return {
    animation: false,
    grid: { left: 56, right: 16, top: 12, bottom: 44 },
    xAxis: {
      type: log ? 'log' : 'value',
      name: 'σ (m² Pa⁻² s⁻¹)',
      nameLocation: 'middle',
      nameGap: 28,
      min: log && positive.length ? 10 ** Math.floor(Math.log10(Math.min(...positive))) : undefined,
      ...axis,
      axisLabel: { ...axis.axisLabel, formatter: (v: number) => v.toExponential(0) },
    },
    yAxis: { type: 'value', name: 'pressure (hPa)', nameLocation: 'middle', nameGap: 40, inverse: true, min: Math.min(...levelsHpa), max: Math.max(...levelsHpa), ...axis },
    tooltip: { trigger: 'item', ...tooltipStyle(frame), formatter: (p: { value: number[] }) => `${p.value[1]} hPa<br/>σ = ${p.value[0].toExponential(2)} m² Pa⁻² s⁻¹` },
    series: [
      {
        id: 'sigma',
        type: 'line',
        data: levelsHpa.map((p, k) => [log && !(sigma[k] > 0) ? null : sigma[k], p]),
        symbolSize: 6,
        lineStyle: { color: seriesColors.primary, width: 2 },
        itemStyle: { color: seriesColors.primary },
      },
    ],
  };
}

/** QG-versus-model pattern correlation per level, 0 to 1 (negative values kept visible when they occur). */
export function buildCorrelationOption(levelsHpa: number[], correlation: (number | null)[], frame: ChartFrame): Record<string, unknown> {
  const axis = axisStyle(frame);
  const minValue = Math.min(0, ...correlation.filter((c): c is number => c !== null));
  return {
    animation: false,
    grid: { left: 56, right: 16, top: 12, bottom: 44 },
    xAxis: { type: 'value', name: 'pattern correlation (0 to 1)', nameLocation: 'middle', nameGap: 28, min: minValue < 0 ? -1 : 0, max: 1, ...axis },
    yAxis: { type: 'category', name: 'hPa', data: levelsHpa.map(String), inverse: false, ...axis },
    tooltip: {
      trigger: 'item',
      ...tooltipStyle(frame),
      formatter: (p: { name: string; value: number | null }) => `${p.name} hPa: r = ${p.value === null ? 'not available' : p.value.toFixed(2)}`,
    },
    series: [
      {
        id: 'correlation',
        type: 'bar',
        data: correlation.map((c) => ({ value: c, itemStyle: { color: c !== null && c < 0 ? seriesColors.model : seriesColors.qg } })),
        barMaxWidth: 14,
      },
    ],
  };
}

/** The daily series one small multiple draws. */
export type SignalPanel = 'precip' | 'snow' | 'cloud' | 'ghi' | 'solar' | 'inflow';

export const SIGNAL_PANELS: { id: SignalPanel; title: string; unit: string }[] = [
  { id: 'precip', title: 'Precipitation (diagnosed vs model, ratio)', unit: 'mm/day' },
  { id: 'snow', title: 'Snow share', unit: '%' },
  { id: 'cloud', title: 'Cloud cover (diagnosed vs model)', unit: '%' },
  { id: 'ghi', title: 'Global horizontal irradiation', unit: 'kWh/m²/day' },
  { id: 'solar', title: 'Solar generation', unit: 'GWh/day' },
  { id: 'inflow', title: 'Inflow energy', unit: 'GWh/day' },
];

const mean = (vals: (number | null)[]) => {
  const v = vals.filter((x): x is number => x !== null && Number.isFinite(x));
  return v.length ? v.reduce((s, x) => s + x, 0) / v.length : null;
};

export interface DailySignals {
  days: string[];
  precip: (number | null)[];
  modelPrecip: (number | null)[];
  snowPct: (number | null)[];
  cloud: (number | null)[];
  modelCloud: (number | null)[];
  ghi: (number | null)[];
  solar: (number | null)[];
  inflow: (number | null)[];
}

/** One region's days, for one member or (member "mean") averaged over the members present. */
export function dailySignals(rows: SignalRow[], regionId: string, member: number | 'mean'): DailySignals {
  const mine = rows.filter((r) => r.regionId === regionId && (member === 'mean' || r.member === member));
  const days = [...new Set(mine.map((r) => r.day))].sort();
  const per = (pick: (r: SignalRow) => number | null) => days.map((d) => mean(mine.filter((r) => r.day === d).map(pick)));
  return {
    days,
    precip: per((r) => r.precipMm),
    modelPrecip: per((r) => r.modelPrecipMm),
    snowPct: per((r) => (r.snowShare === null ? null : r.snowShare * 100)),
    cloud: per((r) => r.cloudPct),
    modelCloud: per((r) => r.modelCloudPct),
    ghi: per((r) => r.ghiKwhM2),
    solar: per((r) => r.solarGwh),
    inflow: per((r) => r.inflowGwh),
  };
}

/** Diagnosed / model precipitation; undefined where the model had (next to) none. */
export function precipRatio(diagnosed: number | null, model: number | null): number | null {
  if (diagnosed === null || model === null || model < 0.1) return null;
  return diagnosed / model;
}

export function buildSignalOption(panel: SignalPanel, s: DailySignals, frame: ChartFrame): Record<string, unknown> {
  const axis = axisStyle(frame);
  const meta = SIGNAL_PANELS.find((p) => p.id === panel)!;
  const base = {
    animation: false,
    grid: { left: 44, right: panel === 'precip' ? 44 : 12, top: 24, bottom: 24 },
    legend: { top: 0, right: 0, textStyle: { color: frame.muted, fontSize: 10 }, itemWidth: 10, itemHeight: 8 },
    tooltip: { trigger: 'axis', ...tooltipStyle(frame), valueFormatter: (v: number | null) => (v === null || v === undefined ? '–' : `${v.toFixed(2)} ${meta.unit}`) },
    xAxis: { type: 'category', data: s.days.map((d) => d.slice(5)), ...axis, splitLine: { show: false } },
  };
  const yAxis = (extra: Record<string, unknown> = {}) => ({ type: 'value', name: meta.unit, ...axis, ...extra });
  const bar = (name: string, data: (number | null)[], color: string) => ({ name, type: 'bar', data, itemStyle: { color }, barMaxWidth: 12 });
  const line = (name: string, data: (number | null)[], color: string, extra: Record<string, unknown> = {}) => ({
    name,
    type: 'line',
    data,
    symbolSize: 5,
    itemStyle: { color },
    lineStyle: { color, width: 2 },
    ...extra,
  });
  switch (panel) {
    case 'precip':
      return {
        ...base,
        tooltip: { trigger: 'axis', ...tooltipStyle(frame) },
        legend: { ...base.legend, top: 'auto', bottom: 0 },
        grid: { ...base.grid, top: 18, bottom: 40 },
        yAxis: [yAxis(), { type: 'value', name: '×', ...axis, splitLine: { show: false } }],
        series: [
          bar('diagnosed (mm)', s.precip, seriesColors.qg),
          bar('model (mm)', s.modelPrecip, seriesColors.model),
          line('ratio diagnosed/model (×)', s.precip.map((p, i) => precipRatio(p, s.modelPrecip[i])), seriesColors.ratio, { yAxisIndex: 1 }),
        ],
      };
    case 'snow':
      return { ...base, yAxis: yAxis({ min: 0, max: 100 }), series: [bar('snow share (%)', s.snowPct, seriesColors.qg)] };
    case 'cloud':
      return {
        ...base,
        yAxis: yAxis({ min: 0, max: 100 }),
        series: [line('diagnosed (%)', s.cloud, seriesColors.qg), line('model (%)', s.modelCloud, seriesColors.model, { lineStyle: { color: seriesColors.model, type: 'dashed', width: 2 } })],
      };
    case 'ghi':
      return { ...base, yAxis: yAxis({ min: 0 }), series: [bar('GHI (kWh/m²)', s.ghi, seriesColors.ratio)] };
    case 'solar':
      return { ...base, yAxis: yAxis({ min: 0 }), series: [bar('solar (GWh)', s.solar, seriesColors.ratio)] };
    case 'inflow':
      return { ...base, yAxis: yAxis({ min: 0 }), series: [bar('inflow (GWh)', s.inflow, seriesColors.qg)] };
  }
}

/** Whether a panel has anything to draw. */
export function panelHasData(panel: SignalPanel, s: DailySignals): boolean {
  const pick: Record<SignalPanel, (number | null)[][]> = {
    precip: [s.precip, s.modelPrecip],
    snow: [s.snowPct],
    cloud: [s.cloud, s.modelCloud],
    ghi: [s.ghi],
    solar: [s.solar],
    inflow: [s.inflow],
  };
  return pick[panel].some((arr) => arr.some((v) => v !== null));
}
