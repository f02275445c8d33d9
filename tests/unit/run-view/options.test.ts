import { describe, expect, it } from 'vitest';
import { divergingScale, palette } from '@shared/design-tokens.ts';
import type { Section } from '@shared/api/run-view.ts';
import type { SignalRow } from '@shared/api/signals.ts';
import { cellEdges, clipLines, gridCells, mapAspect, outlineRings } from '@/components/charts/geo.ts';
import { buildFieldMapOption, polylinesToGappedSeries } from '@/components/charts/map-option.ts';
import { chartFrame, niceCeil, omegaColors, omegaColorsFor, symmetricRange } from '@/lib/chart-theme.ts';
import {
  buildCorrelationOption,
  buildSectionOption,
  buildSigmaOption,
  dailySignals,
  describeOmega,
  formatValidTime,
  precipRatio,
} from '@/features/run-view/options.ts';
import { readViewState } from '@/features/run-view/view-state.ts';

const frame = chartFrame(false);

describe('omega colour scale', () => {
  it('runs from teal (negative omega, ascent) to amber (positive, descent) with the neutral in the middle', () => {
    expect(omegaColors[0]).toBe(palette.ascent.strong);
    expect(omegaColors[omegaColors.length - 1]).toBe(palette.descent.strong);
    expect(omegaColors[3]).toBe(divergingScale[3]);
  });

  it('keeps teal on the negative half and amber on the positive half in the dark theme', () => {
    const dark = omegaColorsFor(true);
    const teal = Object.values(palette.ascent) as string[];
    const amber = Object.values(palette.descent) as string[];
    expect(dark.slice(0, 3).every((c) => teal.includes(c))).toBe(true);
    expect(dark.slice(4).every((c) => amber.includes(c))).toBe(true);
    expect(dark[3]).toBe(palette.slate[800]);
  });

  it('is symmetric around zero and rounded up to a nice magnitude', () => {
    expect(symmetricRange([-0.31, 0.12, null])).toEqual({ min: -0.4, max: 0.4 });
    expect(symmetricRange([-0.52, 0.22])).toEqual({ min: -0.6, max: 0.6 });
    expect(symmetricRange([0.05, 1.7])).toEqual({ min: -2, max: 2 });
    expect(symmetricRange([null])).toEqual({ min: -0.1, max: 0.1 });
    expect(niceCeil(0.21)).toBeCloseTo(0.25, 12);
    expect(niceCeil(7)).toBe(8);
    expect(niceCeil(9)).toBe(10);
  });

  it('the map option puts the teal end at the negative minimum of a symmetric visual map', () => {
    const option = buildFieldMapOption({
      lat: [50, 52],
      lon: [0, 2, 4],
      values: [-0.4, 0, 0.2, null, 0.1, -0.1],
      range: symmetricRange([-0.4, 0.2]),
      colors: omegaColors,
      coastlines: [],
      frame,
      describe: describeOmega,
      legendText: ['top', 'bottom'],
    }) as { visualMap: { min: number; max: number; inRange: { color: string[] } }; series: { id: string; data: number[][] }[] };
    expect(option.visualMap.min).toBe(-0.4);
    expect(option.visualMap.max).toBe(0.4);
    expect(option.visualMap.inRange.color[0]).toBe(palette.ascent.strong);
    const cells = option.series.find((s) => s.id === 'field')!.data;
    expect(cells).toHaveLength(5); // the missing value is left out, not drawn as zero
    expect(cells[0]).toEqual([-1, 1, 49, 51, -0.4, 0, 50]);
  });
});

describe('units and words', () => {
  it('omega in Pa/s with hPa/h alongside (1 Pa/s = 36 hPa/h, from the unit definitions) and its sense', () => {
    expect(describeOmega(-0.5)).toBe('-0.500 Pa/s (-18.0 hPa/h), ascent');
    expect(describeOmega(0.25)).toBe('0.250 Pa/s (9.0 hPa/h), descent');
  });

  it('valid time in UTC with the lead time', () => {
    expect(formatValidTime('2026-12-01T06:00:00.000Z', 6)).toBe('2026-12-01 06Z (+6 h)');
  });
});

describe('grid geometry', () => {
  it('cell edges lie halfway between centres, also on uneven pressure levels', () => {
    expect(cellEdges([0, 1, 2])).toEqual([-0.5, 0.5, 1.5, 2.5]);
    expect(cellEdges([1000, 850, 500])).toEqual([1075, 925, 675, 325]);
  });

  it('gridCells maps row-major values to their cell', () => {
    const cells = gridCells([10, 20], [1, 2], [1, 2, 3, 4]);
    expect(cells[3]).toEqual([15, 25, 1.5, 2.5, 4, 20, 2]);
  });

  it('clips lines to the box, keeping one point past the frame on each side', () => {
    const line: [number, number][] = [[-10, 55], [-5, 55], [0, 55], [5, 55], [20, 55]];
    expect(clipLines([line], { lonMin: -6, lonMax: 6, latMin: 50, latMax: 60 })).toEqual([[[-10, 55], [-5, 55], [0, 55], [5, 55], [20, 55]]]);
    expect(clipLines([[[30, 0], [31, 1]]], { lonMin: -6, lonMax: 6, latMin: 50, latMax: 60 })).toEqual([]);
  });

  it('polygon and multipolygon rings become outlines; a null gap separates polylines', () => {
    expect(outlineRings({ type: 'Polygon', coordinates: [[[0, 0], [1, 0], [1, 1], [0, 0]]] })).toHaveLength(1);
    expect(outlineRings({ type: 'MultiPolygon', coordinates: [[[[0, 0], [1, 0], [0, 0]]], [[[2, 2], [3, 2], [2, 2]]]] })).toHaveLength(2);
    expect(outlineRings({ type: 'Point', coordinates: [0, 0] })).toEqual([]);
    expect(polylinesToGappedSeries([[[0, 0], [1, 1]], [[2, 2], [3, 3]]])).toEqual([[0, 0], [1, 1], null, [2, 2], [3, 3]]);
  });

  it('a map at 60°N is half as wide per degree of longitude (cos 60° = 0.5)', () => {
    expect(mapAspect({ lonMin: 0, lonMax: 20, latMin: 55, latMax: 65 })).toBeCloseTo(1, 6);
  });
});

describe('section, sigma and correlation charts', () => {
  const section: Section = {
    member: 0,
    step: 6,
    validTime: '2026-12-01T06:00:00.000Z',
    part: 'total',
    line: 'great-circle',
    distanceKm: [0, 100, 200],
    path: [],
    levelsHpa: [1000, 500, 100],
    values: [
      [0, 0, 0],
      [-0.3, 0.1, null],
      [0, 0, 0],
    ],
    units: 'Pa s-1',
  };

  it('the section has pressure inverted (1000 hPa at the bottom) and the same teal-negative scale', () => {
    const o = buildSectionOption(section, { min: -0.5, max: 0.5 }, frame) as {
      yAxis: { inverse: boolean; min: number; max: number; name: string };
      xAxis: { name: string };
      visualMap: { inRange: { color: string[] } };
      series: { data: number[][] }[];
    };
    expect(o.yAxis).toMatchObject({ inverse: true, min: 100, max: 1000, name: 'pressure (hPa)' });
    expect(o.xAxis.name).toBe('distance (km)');
    expect(o.visualMap.inRange.color[0]).toBe(palette.ascent.strong);
    expect(o.series[0].data).toHaveLength(8);
    // cells stop at the outermost levels
    expect(Math.max(...o.series[0].data.map((c) => Math.max(c[2], c[3])))).toBe(1000);
  });

  it('sigma on a log axis leaves non-positive values out', () => {
    const o = buildSigmaOption([1000, 500], [2e-6, -1e-7], true, frame) as { xAxis: { type: string }; series: { data: (number | null)[][] }[] };
    expect(o.xAxis.type).toBe('log');
    expect(o.series[0].data[1][0]).toBeNull();
  });

  it('correlation axis is 0..1 unless a level correlates negatively', () => {
    const pos = buildCorrelationOption([1000, 500], [0.4, 0.9], frame) as { xAxis: { min: number; max: number } };
    expect(pos.xAxis).toMatchObject({ min: 0, max: 1 });
    const neg = buildCorrelationOption([1000, 500], [-0.2, null], frame) as { xAxis: { min: number } };
    expect(neg.xAxis.min).toBe(-1);
  });
});

describe('regional signals', () => {
  const row = (member: number, day: string, precipMm: number, modelPrecipMm: number | null): SignalRow => ({
    runId: '00000000-0000-4000-8000-000000000000',
    member,
    regionId: 'r1',
    day,
    precipMm,
    snowShare: 0.5,
    cloudPct: 80,
    ghiKwhM2: 0.3,
    solarGwh: 0.1,
    inflowGwh: 2,
    modelPrecipMm,
    modelCloudPct: null,
    hoursCovered: 24,
    calibrationVersion: 1,
    codeVersion: 'x',
    inputChecksum: 'y',
  });

  it('averages members per day for the mean and keeps one member otherwise', () => {
    const rows = [row(0, '2026-12-02', 4, 2), row(1, '2026-12-02', 6, 4), row(0, '2026-12-01', 1, null)];
    const mean = dailySignals(rows, 'r1', 'mean');
    expect(mean.days).toEqual(['2026-12-01', '2026-12-02']);
    expect(mean.precip).toEqual([1, 5]);
    expect(mean.modelPrecip).toEqual([null, 3]);
    expect(mean.snowPct).toEqual([50, 50]);
    expect(dailySignals(rows, 'r1', 1).precip).toEqual([6]);
  });

  it('the ratio is undefined where the model has (next to) no precipitation', () => {
    expect(precipRatio(5, 2)).toBe(2.5);
    expect(precipRatio(5, 0)).toBeNull();
    expect(precipRatio(null, 2)).toBeNull();
  });
});

describe('view state from the address', () => {
  const run = { steps: [0, 6, 12], levelsHpa: [1000, 700, 500, 300], members: [0, 1, 2] };
  it('defaults: first step after the analysis, 500 hPa, ensemble mean, total', () => {
    expect(readViewState(new URLSearchParams(''), run)).toEqual({ member: 'mean', step: 6, level: 500, part: 'total' });
  });
  it('keeps what is in the run and replaces what is not', () => {
    expect(readViewState(new URLSearchParams('step=12&level=300&member=2&part=qvector'), run)).toEqual({ member: 2, step: 12, level: 300, part: 'qvector' });
    expect(readViewState(new URLSearchParams('step=7&level=550&member=9&part=x'), run)).toEqual({ member: 'mean', step: 6, level: 500, part: 'total' });
  });
});

describe('coastlines', () => {
  it('Natural Earth land (world-atlas land-50m) yields coastlines inside a Nordic box', async () => {
    const { loadCoastlines } = await import('@/components/charts/coastlines.ts');
    const lines = clipLines(await loadCoastlines(), { lonMin: 4, lonMax: 31, latMin: 57, latMax: 71 });
    expect(lines.length).toBeGreaterThan(20);
    // Norway's west coast near Bergen (60.4N, 5.3E, from memory) has coastline within half a degree.
    const near = lines.some((l) => l.some(([lon, lat]) => Math.abs(lat - 60.4) < 0.5 && Math.abs(lon - 5.3) < 0.5));
    expect(near).toBe(true);
  });
});
