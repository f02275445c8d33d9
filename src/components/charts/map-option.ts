/**
 * The ECharts option of a lat/lon field map: grid cells as a custom series on value axes (plate
 * carrée), coloured by a continuous visual map, with coastlines, region outlines and an optional
 * drawn line on top. Pure: tests build it without a canvas.
 */
import type { ChartFrame } from '@/lib/chart-theme.ts';
import { axisStyle, tooltipStyle } from '@/lib/chart-theme.ts';
import { cellEdges, gridCells, type LonLat, type Polyline } from './geo.ts';

export interface FieldMapInput {
  lat: readonly number[];
  lon: readonly number[];
  /** row-major [lat][lon], lat ascending */
  values: readonly (number | null)[];
  range: { min: number; max: number };
  /** colours from range.min to range.max */
  colors: readonly string[];
  coastlines: readonly Polyline[];
  outlines?: readonly { name: string; rings: readonly Polyline[] }[];
  /** points the user picked, drawn as a line with markers */
  line?: readonly LonLat[];
  frame: ChartFrame;
  /** tooltip text of one value */
  describe: (value: number) => string;
  /** end labels of the colour legend, top (max) first */
  legendText: [string, string];
}

const fmtDeg = (v: number, pos: string, neg: string) => `${Math.abs(Math.round(v * 100) / 100)}°${v >= 0 ? pos : neg}`;

interface RenderApi {
  value(dim: number): number;
  coord(point: number[]): number[];
  visual(name: string): string;
}

/** Draws one grid cell: the item carries its edges [x0, x1, y0, y1, value, ...]. */
export function renderCell(_params: unknown, api: RenderApi) {
  const a = api.coord([api.value(0), api.value(3)]);
  const b = api.coord([api.value(1), api.value(2)]);
  // Whole pixels: neighbouring cells share their edge exactly, so no hairline seams show between them.
  const x0 = Math.round(Math.min(a[0], b[0]));
  const y0 = Math.round(Math.min(a[1], b[1]));
  const x1 = Math.round(Math.max(a[0], b[0]));
  const y1 = Math.round(Math.max(a[1], b[1]));
  return {
    type: 'rect',
    shape: { x: x0, y: y0, width: Math.max(1, x1 - x0), height: Math.max(1, y1 - y0) },
    style: { fill: api.visual('color') },
  };
}

export function buildFieldMapOption(input: FieldMapInput): Record<string, unknown> {
  const { frame } = input;
  const lonEdges = cellEdges(input.lon);
  const latEdges = cellEdges(input.lat);
  const box = { lonMin: lonEdges[0], lonMax: lonEdges[lonEdges.length - 1], latMin: latEdges[0], latMax: latEdges[latEdges.length - 1] };
  const axis = axisStyle(frame);
  const series: Record<string, unknown>[] = [
    {
      id: 'field',
      type: 'custom',
      renderItem: renderCell,
      data: gridCells(input.lon, input.lat, input.values),
      encode: { x: [0, 1], y: [2, 3], tooltip: 4 },
      clip: true,
      progressive: 0,
      animation: false,
    },
    {
      id: 'coastlines',
      type: 'line',
      data: polylinesToGappedSeries(input.coastlines),
      showSymbol: false,
      connectNulls: false,
      silent: true,
      clip: true,
      animation: false,
      lineStyle: { color: frame.coast, width: 0.8 },
      tooltip: { show: false },
    },
  ];
  for (const [index, region] of (input.outlines ?? []).entries()) {
    series.push({
      id: `region-${index}-${region.name}`,
      name: region.name,
      type: 'line',
      data: polylinesToGappedSeries(region.rings),
      showSymbol: false,
      connectNulls: false,
      silent: true,
      clip: true,
      animation: false,
      lineStyle: { color: frame.text, width: 1.2, type: 'dashed' },
    });
  }
  if (input.line && input.line.length) {
    series.push({
      id: 'picked-line',
      type: 'line',
      data: input.line.map((p) => [p[0], p[1]]),
      symbol: 'circle',
      symbolSize: 8,
      clip: true,
      animation: false,
      lineStyle: { color: frame.text, width: 2 },
      itemStyle: { color: frame.text, borderColor: frame.tooltipBg, borderWidth: 2 },
      tooltip: { show: false },
    });
  }
  return {
    backgroundColor: frame.background,
    animation: false,
    grid: { left: 48, right: 120, top: 12, bottom: 28 },
    xAxis: { type: 'value', min: box.lonMin, max: box.lonMax, ...axis, splitLine: { show: false }, axisLabel: { ...axis.axisLabel, showMinLabel: false, showMaxLabel: false, formatter: (v: number) => fmtDeg(v, 'E', 'W') } },
    yAxis: { type: 'value', min: box.latMin, max: box.latMax, ...axis, splitLine: { show: false }, axisLabel: { ...axis.axisLabel, showMinLabel: false, showMaxLabel: false, formatter: (v: number) => fmtDeg(v, 'N', 'S') } },
    visualMap: {
      type: 'continuous',
      seriesIndex: 0,
      dimension: 4,
      min: input.range.min,
      max: input.range.max,
      inRange: { color: [...input.colors] },
      calculable: false,
      orient: 'vertical',
      right: 4,
      top: 'middle',
      itemHeight: 180,
      itemWidth: 14,
      text: input.legendText,
      textGap: 6,
      textStyle: { color: frame.muted, fontFamily: frame.fontMono, fontSize: 10, lineHeight: 13 },
    },
    tooltip: {
      trigger: 'item',
      ...tooltipStyle(frame),
      formatter: (p: { value: number[] }) => `${fmtDeg(p.value[6], 'N', 'S')}, ${fmtDeg(p.value[5], 'E', 'W')}<br/>${input.describe(p.value[4])}`,
    },
    series,
  };
}

/** Several polylines as one line series: a null point between them breaks the line. */
export function polylinesToGappedSeries(lines: readonly Polyline[]): (number[] | null)[] {
  const data: (number[] | null)[] = [];
  for (const line of lines) {
    if (data.length) data.push(null);
    for (const p of line) data.push([p[0], p[1]]);
  }
  return data;
}
