import { keepPreviousData, useQuery } from '@tanstack/react-query';
import { useMemo } from 'react';
import { OMEGA_PART_LABELS } from '@shared/api/run-view.ts';
import { FieldMap } from '@/components/charts/FieldMap.tsx';
import { outlineRings, type LonLat } from '@/components/charts/geo.ts';
import { Card } from '@/components/Page.tsx';
import { omegaColorsFor, symmetricRange, useDarkMode } from '@/lib/chart-theme.ts';
import { formatValue, paPerSToHpaPerH } from '@/lib/format.ts';
import { omegaQuery, regionsQuery } from './api.ts';
import { describeOmega, omegaLegendText } from './options.ts';
import { PartSwitch } from './ViewControls.tsx';
import type { ViewState } from './view-state.ts';

interface Props {
  runId: string;
  view: ViewState;
  onChange: (patch: Partial<ViewState>) => void;
  picked: LonLat[];
  onPick: (p: { lat: number; lon: number }) => void;
}

/** The ascent map: omega at the chosen level and valid time, teal = ascent (negative omega). */
export function AscentMapCard({ runId, view, onChange, picked, onPick }: Props) {
  const dark = useDarkMode();
  const omega = useQuery({ ...omegaQuery(runId, view), placeholderData: keepPreviousData });
  const regions = useQuery(regionsQuery);
  const outlines = useMemo(
    () => (regions.data ?? []).map((r) => ({ name: r.name, rings: outlineRings(r.geometry) })).filter((r) => r.rings.length > 0),
    [regions.data],
  );
  const range = useMemo(() => symmetricRange(omega.data?.values ?? []), [omega.data]);
  const data = omega.data;
  return (
    <Card title={`Ascent map · ${view.level} hPa · ${OMEGA_PART_LABELS[view.part].label}`}>
      <div className="mb-2 flex flex-wrap items-start justify-between gap-3">
        <PartSwitch value={view.part} onChange={(part) => onChange({ part })} />
        {data ? (
          <dl className="num grid grid-cols-2 gap-x-3 text-2xs text-ink-muted">
            <dt>strongest ascent</dt>
            <dd className="text-ascent-strong dark:text-ascent-mid">
              {formatValue(data.min, 'Pa/s', 2)} ({formatValue(data.min === null ? null : paPerSToHpaPerH(data.min), 'hPa/h', 1)})
            </dd>
            <dt>strongest descent</dt>
            <dd className="text-descent-strong dark:text-descent-mid">
              {formatValue(data.max, 'Pa/s', 2)} ({formatValue(data.max === null ? null : paPerSToHpaPerH(data.max), 'hPa/h', 1)})
            </dd>
          </dl>
        ) : null}
      </div>
      {omega.isError ? (
        <p role="alert" className="text-caution">
          The map cannot be shown: {omega.error.message}
        </p>
      ) : data ? (
        <div className={omega.isPlaceholderData ? 'opacity-60 transition-opacity' : ''} aria-busy={omega.isFetching}>
          <FieldMap
            label={`Omega at ${view.level} hPa, +${view.step} h: teal is ascent (negative omega), amber is descent`}
            lat={data.lat}
            lon={data.lon}
            values={data.values}
            range={range}
            colors={omegaColorsFor(dark)}
            outlines={outlines}
            line={picked}
            describe={describeOmega}
            legendText={omegaLegendText(range)}
            onPick={onPick}
          />
        </div>
      ) : (
        <p className="py-24 text-center text-ink-muted">Loading the omega field…</p>
      )}
      <p className="mt-1 text-2xs text-ink-muted">
        Omega in Pa/s (1 Pa/s = 36 hPa/h); negative omega is rising air. The colour scale is symmetric around zero. Click two points on the map to draw a cross-section.
        {regions.data && regions.data.length === 0 ? ' No region outlines are defined yet.' : ''}
      </p>
    </Card>
  );
}
