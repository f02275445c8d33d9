/**
 * The one ECharts wrapper: echarts/core with only the charts and components Liftwise draws,
 * through the ESM core build of echarts-for-react (the lib/ build breaks under Vite).
 */
import EChartsReactCore from 'echarts-for-react/esm/core';
import { BarChart, CustomChart, HeatmapChart, LineChart, ScatterChart } from 'echarts/charts';
import {
  DataZoomComponent,
  GridComponent,
  LegendComponent,
  MarkLineComponent,
  TitleComponent,
  TooltipComponent,
  VisualMapComponent,
} from 'echarts/components';
import * as echarts from 'echarts/core';
import { CanvasRenderer } from 'echarts/renderers';
import type { CSSProperties } from 'react';

echarts.use([
  BarChart,
  CustomChart,
  HeatmapChart,
  LineChart,
  ScatterChart,
  DataZoomComponent,
  GridComponent,
  LegendComponent,
  MarkLineComponent,
  TitleComponent,
  TooltipComponent,
  VisualMapComponent,
  CanvasRenderer,
]);

export type EChartsInstance = echarts.ECharts;

export interface EChartProps {
  // ECharts options are a large untyped-in-practice object; builders in each feature type their inputs.
  option: Record<string, unknown>;
  style?: CSSProperties;
  className?: string;
  /** accessible name: charts are images to a screen reader, so say what the chart shows */
  label: string;
  onReady?: (chart: EChartsInstance) => void;
  notMerge?: boolean;
}

export function EChart({ option, style, className, label, onReady, notMerge = true }: EChartProps) {
  return (
    <div role="img" aria-label={label} className={className}>
      <EChartsReactCore
        echarts={echarts}
        option={option}
        notMerge={notMerge}
        lazyUpdate
        style={{ height: '100%', width: '100%', ...style }}
        onChartReady={onReady}
        opts={{ renderer: 'canvas' }}
      />
    </div>
  );
}
