import ReactEChartsCore from 'echarts-for-react/esm/core';
import { HeatmapChart } from 'echarts/charts';
import { GridComponent, TooltipComponent, VisualMapComponent } from 'echarts/components';
import * as echarts from 'echarts/core';
import { CanvasRenderer } from 'echarts/renderers';
import { useMemo } from 'react';
import type { ClusterMeanFields } from '@shared/api/clusters.ts';
import { palette } from '@shared/design-tokens.ts';

echarts.use([HeatmapChart, GridComponent, TooltipComponent, VisualMapComponent, CanvasRenderer]);

/**
 * One cluster's mean 500 hPa height, in decametres (dam), as a lat/lon heatmap banded every
 * 4 dam like a contour chart. Heights are neither ascent nor descent, so the bands are slate.
 */
export function ClusterMap({ fields, index, min, max, title }: { fields: ClusterMeanFields; index: number; min: number; max: number; title: string }) {
  const option = useMemo(() => {
    const { lat, lon } = fields;
    const data: [number, number, number][] = [];
    fields.fields[index].forEach((v, g) => {
      if (v !== null) data.push([g % lon.length, Math.floor(g / lon.length), Math.round(v / 10)]);
    });
    const lo = Math.floor(min / 10 / 4) * 4;
    const hi = Math.ceil(max / 10 / 4) * 4;
    const steps = Math.max(1, (hi - lo) / 4);
    const shades = [palette.slate[100], palette.slate[200], palette.slate[300], palette.slate[400], palette.slate[500], palette.slate[600], palette.slate[700]];
    const pieces = Array.from({ length: steps }, (_, i) => ({
      gte: lo + i * 4,
      lt: lo + (i + 1) * 4,
      label: `${lo + i * 4}–${lo + (i + 1) * 4} dam`,
      color: shades[Math.min(shades.length - 1, Math.floor((i / Math.max(1, steps - 1)) * (shades.length - 1)))],
    }));
    return {
      animation: false,
      tooltip: {
        formatter: (p: { value: [number, number, number] }) => `${lat[p.value[1]].toFixed(1)}° N ${lon[p.value[0]].toFixed(1)}° E: ${p.value[2]} dam`,
      },
      grid: { left: 40, right: 8, top: 8, bottom: 48 },
      xAxis: { type: 'category', data: lon.map((x) => `${x.toFixed(0)}°E`), name: 'lon', axisLabel: { interval: Math.ceil(lon.length / 6) } },
      yAxis: { type: 'category', data: lat.map((y) => `${y.toFixed(0)}°N`), axisLabel: { interval: Math.ceil(lat.length / 5) } },
      visualMap: { type: 'piecewise', pieces, orient: 'horizontal', left: 'center', bottom: 0, itemWidth: 10, itemHeight: 8, textStyle: { fontSize: 9 } },
      series: [{ type: 'heatmap', data, name: title }],
    };
  }, [fields, index, min, max, title]);
  return (
    <figure className="flex flex-col">
      <figcaption className="text-xs font-medium">{title}</figcaption>
      <ReactEChartsCore echarts={echarts} option={option} style={{ height: 220 }} notMerge aria-label={`${title}: mean 500 hPa height in dam`} />
    </figure>
  );
}
