/**
 * The Scenarios screen's pure parts: grid filters to the API's terms and back, the teal/amber
 * meaning of change columns (more solar energy is sunnier: amber), and the fan chart's series.
 */
import { describe, expect, it } from 'vitest';
import { palette } from '@shared/design-tokens.ts';
import type { SummaryRow } from '@shared/api/scenarios.ts';
import { changeClassRules } from '../../../src/features/scenarios/columns.tsx';
import { fanChartOption } from '../../../src/features/scenarios/FanChart.tsx';
import { apiQuery, filterModelFromNumberFilters, normaliseCycle, numberFiltersFromModel } from '../../../src/features/scenarios/filters.ts';

describe('grid filters and the API', () => {
  it('turns AG Grid number filters into nf and back', () => {
    const model = {
      precipMm: { filterType: 'number', type: 'greaterThanOrEqual', filter: 5 },
      cloudPct: { filterType: 'number', type: 'inRange', filter: 20, filterTo: 60 },
      region: { filterType: 'text', type: 'contains', filter: 'x' },
    };
    const nf = numberFiltersFromModel(model);
    expect(nf).toBe('precipMm.gte.5,cloudPct.gte.20,cloudPct.lte.60');
    expect(filterModelFromNumberFilters(nf)).toEqual({
      precipMm: { filterType: 'number', type: 'greaterThanOrEqual', filter: 5 },
      cloudPct: { filterType: 'number', type: 'inRange', filter: 20, filterTo: 60 },
    });
  });

  it('reads a cycle the way the desk writes it', () => {
    expect(normaliseCycle('2026-12-01 00Z')).toBe('2026-12-01T00:00:00Z');
    expect(normaliseCycle('2026-12-01T06:00')).toBe('2026-12-01T06:00:00Z');
    expect(normaliseCycle('2026-12-01T12:00:00Z')).toBe('2026-12-01T12:00:00Z');
    expect(normaliseCycle('yesterday')).toBe('yesterday');
  });

  it('drops the client-only parameters from the API query', () => {
    expect(apiQuery(new URLSearchParams('regions=a&region=a&quantity=cloudPct&sort=day')).toString()).toBe('regions=a&sort=day');
  });
});

describe('teal/amber meaning of changes', () => {
  const classes = (q: Parameters<typeof changeClassRules>[0], value: number) =>
    Object.entries(changeClassRules(q))
      .filter(([, rule]) => rule({ value } as never))
      .map(([name]) => name.split(' ')[0]);
  it('wetter precipitation and more cloud are teal; less is amber', () => {
    expect(classes('precipMm', 1.2)).toEqual(['text-ascent-strong']);
    expect(classes('precipMm', -0.4)).toEqual(['text-descent-strong']);
    expect(classes('cloudPct', 3)).toEqual(['text-ascent-strong']);
    expect(classes('inflowGwh', -1)).toEqual(['text-descent-strong']);
  });
  it('more solar energy or GHI is sunnier: amber; less is teal', () => {
    expect(classes('solarGwh', 0.5)).toEqual(['text-descent-strong']);
    expect(classes('solarGwh', -0.5)).toEqual(['text-ascent-strong']);
    expect(classes('ghiKwhM2', 0.1)).toEqual(['text-descent-strong']);
    expect(classes('solarGwh', 0)).toEqual([]);
  });
});

describe('fan chart', () => {
  const stats = (p10: number, p50: number, p90: number, previousP50: number | null) => ({ p10, p50, p90, previousP50, changeP50: previousP50 === null ? null : p50 - previousP50 });
  const row = (day: string, s: ReturnType<typeof stats>): SummaryRow =>
    ({ regionId: 'r', region: 'R', kind: 'hydro', day, scenarios: 3, stats: { precipMm: s, solarGwh: s } }) as unknown as SummaryRow;
  const rows = [row('2026-12-02', stats(1, 3, 8, 2)), row('2026-12-03', stats(0, 1, 2, null))];

  it('draws the P10–P90 band stacked on P10, the P50 line and the previous P50 dashed', () => {
    const option = fanChartOption({ rows, quantity: 'precipMm', dark: false }) as { series: Array<{ name: string; data: unknown[]; lineStyle?: { type?: string; color?: string } }> };
    const byName = Object.fromEntries(option.series.map((s) => [s.name, s]));
    expect(byName['P10'].data).toEqual([1, 0]);
    expect(byName['P10–P90'].data).toEqual([7, 2]);
    expect(byName['P50'].data).toEqual([3, 1]);
    expect(byName['Previous cycle P50'].data).toEqual([2, null]);
    expect(byName['Previous cycle P50'].lineStyle?.type).toBe('dashed');
    expect(byName['P50'].lineStyle?.color).toBe(palette.ascent.strong);
  });

  it('solar is drawn in the sunnier amber', () => {
    const option = fanChartOption({ rows, quantity: 'solarGwh', dark: true }) as { series: Array<{ name: string; lineStyle?: { color?: string } }> };
    expect(option.series.find((s) => s.name === 'P50')?.lineStyle?.color).toBe(palette.descent.strong);
  });
});
