import { useQuery } from '@tanstack/react-query';
import { useMemo, useState } from 'react';
import { CAUTIONS } from '@shared/cautions.ts';
import { EChart } from '@/components/charts/EChart.tsx';
import { CautionNote, Card } from '@/components/Page.tsx';
import { chartFrame, useDarkMode } from '@/lib/chart-theme.ts';
import { regionsQuery, signalsQuery, type MemberChoice } from './api.ts';
import { buildSignalOption, dailySignals, panelHasData, SIGNAL_PANELS } from './options.ts';

/** Daily signals per region: small multiples for the chosen region and member (or the members' mean). */
export function SignalsCard({ runId, member }: { runId: string; member: MemberChoice }) {
  const dark = useDarkMode();
  const signals = useQuery(signalsQuery(runId));
  const regions = useQuery(regionsQuery);
  const rows = useMemo(() => signals.data ?? [], [signals.data]);
  const regionIds = useMemo(() => [...new Set(rows.map((r) => r.regionId))].sort(), [rows]);
  const names = new Map((regions.data ?? []).map((r) => [r.id, r.name]));
  const [chosen, setChosen] = useState<string | null>(null);
  const regionId = chosen && regionIds.includes(chosen) ? chosen : regionIds[0];
  const daily = useMemo(() => (regionId ? dailySignals(rows, regionId, member) : null), [rows, regionId, member]);
  const frame = chartFrame(dark);

  let body;
  if (signals.isError) {
    body = (
      <p role="alert" className="text-caution">
        The regional signals cannot be shown: {signals.error.message}
      </p>
    );
  } else if (signals.isPending) {
    body = <p className="text-ink-muted">Loading the regional signals…</p>;
  } else if (!daily || daily.days.length === 0) {
    body = (
      <p className="py-6 text-center text-ink-muted" role="status">
        No regional signals for this run{member !== 'mean' ? ` and member ${member}` : ''} yet. They appear once the run's members have been turned into precipitation, cloud, solar and inflow
        figures for the defined regions.
      </p>
    );
  } else {
    body = (
      <div className="grid gap-3 md:grid-cols-2 xl:grid-cols-3">
        {SIGNAL_PANELS.map((panel) => (
          <figure key={panel.id} className="rounded border border-line p-2">
            <figcaption className="text-2xs font-medium text-ink-muted">
              {panel.title} <span className="num">({panel.unit})</span>
            </figcaption>
            {panelHasData(panel.id, daily) ? (
              <div className="h-40">
                <EChart option={buildSignalOption(panel.id, daily, frame)} label={`${panel.title} in ${panel.unit} per day`} className="h-full w-full" />
              </div>
            ) : (
              <p className="py-12 text-center text-2xs text-ink-faint">No values for this region.</p>
            )}
          </figure>
        ))}
      </div>
    );
  }

  return (
    <Card title="Regional signals">
      {regionIds.length > 0 ? (
        <label className="mb-2 flex items-center gap-2 text-xs text-ink-muted">
          Region
          <select className="rounded border border-line bg-surface px-1.5 py-0.5 text-ink" value={regionId} onChange={(e) => setChosen(e.target.value)}>
            {regionIds.map((id) => (
              <option key={id} value={id}>
                {names.get(id) ?? id}
              </option>
            ))}
          </select>
          <span>{member === 'mean' ? 'mean of the members' : `member ${member}`}, per UTC day</span>
        </label>
      ) : null}
      {body}
      <div className="mt-3">
        <CautionNote>
          {CAUTIONS.map((c) => (
            <p key={c}>{c}</p>
          ))}
        </CautionNote>
      </div>
    </Card>
  );
}
