import { useQuery } from '@tanstack/react-query';
import { useCallback, useState } from 'react';
import { Link, useParams } from 'react-router-dom';
import { CAUTIONS } from '@shared/cautions.ts';
import type { LonLat } from '@/components/charts/geo.ts';
import { CautionNote, EmptyState, PageHeader } from '@/components/Page.tsx';
import { ApiError } from '@/lib/api.ts';
import { diagnosticsQuery, runViewQuery } from './api.ts';
import { AscentMapCard } from './AscentMapCard.tsx';
import { MembersCard } from './MembersCard.tsx';
import { ProfilesCard } from './ProfilesCard.tsx';
import { RunHeader } from './RunHeader.tsx';
import { SectionCard, type SectionLine } from './SectionCard.tsx';
import { SignalsCard } from './SignalsCard.tsx';
import { ViewControls } from './ViewControls.tsx';
import { useViewState } from './view-state.ts';

export function RunViewPage() {
  const { runId = '' } = useParams();
  const run = useQuery(runViewQuery(runId));
  const [view, setView] = useViewState(run.data);
  const [line, setLine] = useState<SectionLine | null>(null);
  const [pending, setPending] = useState<{ lat: number; lon: number } | null>(null);

  // Two clicks on the map make a line: the first starts it, the second ends it (a third starts anew).
  const onPick = useCallback(
    (p: { lat: number; lon: number }) => {
      if (pending) {
        setLine({ from: pending, to: p });
        setPending(null);
      } else {
        setPending(p);
        setLine(null);
      }
    },
    [pending],
  );
  const picked: LonLat[] = line ? [[line.from.lon, line.from.lat], [line.to.lon, line.to.lat]] : pending ? [[pending.lon, pending.lat]] : [];
  const ready = run.data?.state === 'ready';
  // The same query the profiles card reads (cached once): a run marked ready without diagnosis rows gets an honest empty state.
  const diagnostics = useQuery({ ...diagnosticsQuery(runId, view?.member ?? 'mean'), enabled: ready && view !== null, retry: false });
  const noDiagnosis = diagnostics.error instanceof ApiError && diagnostics.error.status === 404;

  return (
    <div className="flex flex-col gap-4">
      <PageHeader
        title="Run view"
        subtitle="Ascent maps, cross-sections, forcing terms and regional signals of one run."
        actions={
          <Link to="/runs" className="text-action hover:underline">
            All runs
          </Link>
        }
      />
      {run.isError ? (
        <EmptyState icon="caution" title="This run cannot be shown">
          {run.error.message}
        </EmptyState>
      ) : run.data ? (
        <>
          {ready && view ? <ViewControls run={run.data} view={view} onChange={setView} /> : null}
          <RunHeader run={run.data} />
          {ready && view && noDiagnosis ? (
            <EmptyState icon="ascent" title="No diagnosis for this run">
              The run is marked ready but the server holds no QG diagnosis for it: {diagnostics.error?.message}
            </EmptyState>
          ) : ready && view ? (
            <>
              <div className="grid gap-4 2xl:grid-cols-2">
                <AscentMapCard runId={runId} view={view} onChange={setView} picked={picked} onPick={onPick} />
                <SectionCard runId={runId} view={view} line={line} onLine={(l) => { setLine(l); setPending(null); }} />
              </div>
              <ProfilesCard runId={runId} view={view} />
              <SignalsCard runId={runId} member={view.member} />
            </>
          ) : run.data.state === 'rejected' ? null : (
            <EmptyState icon="ascent" title="No diagnosis for this run yet">
              The QG ascent map, the vertical cross-section, the forcing terms and the regional signal series appear here once every member has been
              diagnosed. {run.data.message ?? ''}
            </EmptyState>
          )}
          {run.data.state !== 'rejected' ? <MembersCard runId={runId} /> : null}
          {ready ? null : (
            <CautionNote>
              <p>{CAUTIONS[0]}</p>
            </CautionNote>
          )}
        </>
      ) : (
        <p className="text-ink-muted">Loading the run…</p>
      )}
    </div>
  );
}
