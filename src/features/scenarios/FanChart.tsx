/**
 * A region's daily spread across scenarios: the weighted P10–P90 band, the P50 line and the
 * previous cycle's P50 dashed. ECharts through the core build, registering only the parts used.
 */
import { LineChart } from 'echarts/charts';
import { GridComponent, LegendComponent, TooltipComponent } from 'echarts/components';
import * as echarts from 'echarts/core';
import { CanvasRenderer } from 'echarts/renderers';
import ReactEChartsCore from 'echarts-for-react/esm/core';
import { QUANTITY_LABELS, WETTER_SIGN, type ScenarioQuantity, type SummaryRow } from '@shared/api/scenarios.ts';
import { fonts, palette } from '@shared/design-tokens.ts';

echarts.use([LineChart, GridComponent, LegendComponent, TooltipComponent, CanvasRenderer]);

export interface FanChartProps {
  rows: SummaryRow[];
  quantity: ScenarioQuantity;
  dark: boolean;
}

/** The chart's option: exported so that a test can check the series without a canvas. */
export function fanChartOption({ rows, quantity, dark }: FanChartProps): echarts.EChartsCoreOption {
  const { label, unit, digits } = QUANTITY_LABELS[quantity];
  // Same meaning as every other colour: wetter/cloudier quantities in teal, sunnier ones in amber.
  const tone = WETTER_SIGN[quantity] > 0 ? palette.ascent : palette.descent;
  const ink = dark ? palette.slate[200] : palette.slate[700];
  const rule = dark ? palette.slate[800] : palette.slate[200];
  const days = rows.map((r) => r.day);
  const s = rows.map((r) => r.stats[quantity]);
  const fmt = (v: unknown) => (typeof v === 'number' ? `${v.toFixed(digits)} ${unit}` : '–');
  return {
    textStyle: { fontFamily: fonts.sans.join(','), color: ink },
    grid: { left: 56, right: 16, top: 36, bottom: 28 },
    legend: { top: 4, textStyle: { color: ink }, data: ['P10–P90', 'P50', 'Previous cycle P50'] },
    tooltip: { trigger: 'axis', valueFormatter: fmt },
    xAxis: { type: 'category', data: days, axisLabel: { color: ink, fontFamily: fonts.mono.join(',') } },
    yAxis: { type: 'value', name: `${label} (${unit})`, nameTextStyle: { color: ink }, splitLine: { lineStyle: { color: rule } }, axisLabel: { color: ink, fontFamily: fonts.mono.join(',') } },
    series: [
      // the band: an invisible P10 line with P90 - P10 stacked on top of it
      { name: 'P10', type: 'line', data: s.map((x) => x.p10), stack: 'band', lineStyle: { opacity: 0 }, symbol: 'none', tooltip: { show: false } },
      {
        name: 'P10–P90',
        type: 'line',
        data: s.map((x) => (x.p10 !== null && x.p90 !== null ? x.p90 - x.p10 : null)),
        stack: 'band',
        lineStyle: { opacity: 0 },
        symbol: 'none',
        areaStyle: { color: dark ? tone.mid : tone.soft, opacity: dark ? 0.3 : 0.8 },
        itemStyle: { color: tone.soft },
        tooltip: { valueFormatter: (v: unknown) => (typeof v === 'number' ? `width ${v.toFixed(digits)} ${unit}` : '–') },
      },
      { name: 'P50', type: 'line', data: s.map((x) => x.p50), symbol: 'circle', symbolSize: 4, lineStyle: { color: tone.strong, width: 2 }, itemStyle: { color: tone.strong } },
      {
        name: 'Previous cycle P50',
        type: 'line',
        data: s.map((x) => x.previousP50),
        symbol: 'none',
        lineStyle: { color: tone.mid, width: 1.5, type: 'dashed' },
        itemStyle: { color: tone.mid },
      },
    ],
  };
}

export function FanChart(props: FanChartProps) {
  return <ReactEChartsCore echarts={echarts} option={fanChartOption(props)} notMerge style={{ height: 280, width: '100%' }} />;
}
