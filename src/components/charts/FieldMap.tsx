/**
 * A lat/lon field map (omega, or any gridded field) with coastlines and region outlines; clicks
 * report the clicked latitude and longitude. Reusable by any feature that draws a field.
 */
import { useEffect, useMemo, useRef } from 'react';
import { chartFrame, useDarkMode } from '@/lib/chart-theme.ts';
import { useCoastlines } from './coastlines.ts';
import { EChart, type EChartsInstance } from './EChart.tsx';
import { mapAspect, type LonLat, type Polyline } from './geo.ts';
import { buildFieldMapOption, type FieldMapInput } from './map-option.ts';

export interface FieldMapProps extends Omit<FieldMapInput, 'coastlines' | 'frame'> {
  label: string;
  onPick?: (point: { lat: number; lon: number }) => void;
  outlines?: { name: string; rings: Polyline[] }[];
  line?: LonLat[];
}

export function FieldMap({ label, onPick, ...input }: FieldMapProps) {
  const dark = useDarkMode();
  const { lat, lon } = input;
  const box = useMemo(
    () => (lat.length && lon.length ? { lonMin: lon[0], lonMax: lon[lon.length - 1], latMin: lat[0], latMax: lat[lat.length - 1] } : null),
    [lat, lon],
  );
  const coastlines = useCoastlines(box);
  const option = useMemo(() => buildFieldMapOption({ ...input, coastlines, frame: chartFrame(dark) }), [input, coastlines, dark]);
  const pickRef = useRef(onPick);
  const boxRef = useRef(box);
  useEffect(() => {
    pickRef.current = onPick;
    boxRef.current = box;
  });

  const onReady = (chart: EChartsInstance) => {
    chart.getZr().on('click', (e: { offsetX: number; offsetY: number }) => {
      const b = boxRef.current;
      if (!pickRef.current || !b || !chart.containPixel({ gridIndex: 0 }, [e.offsetX, e.offsetY])) return;
      const [x, y] = chart.convertFromPixel({ gridIndex: 0 }, [e.offsetX, e.offsetY]) as number[];
      if (x < b.lonMin || x > b.lonMax || y < b.latMin || y > b.latMax) return;
      pickRef.current({ lat: Math.round(y * 100) / 100, lon: Math.round(x * 100) / 100 });
    });
  };

  // Room for the axes and the colour legend beside a map that keeps its proportions.
  const aspect = box ? mapAspect(box) : 1.6;
  return (
    <div className="w-full" style={{ aspectRatio: `${Math.max(0.6, Math.min(3, aspect)) * 1.0 + 0.35}` }} data-testid="field-map">
      <EChart option={option} label={label} onReady={onReady} className="h-full w-full" />
    </div>
  );
}
