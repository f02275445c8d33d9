import { useQuery } from '@tanstack/react-query';
import { Link, useParams } from 'react-router-dom';
import { EmptyState, PageHeader } from '@/components/Page.tsx';
import { runViewQuery } from './api.ts';
import { RunHeader } from './RunHeader.tsx';

export function RunViewPage() {
  const { runId = '' } = useParams();
  const run = useQuery(runViewQuery(runId));
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
          <RunHeader run={run.data} />
          <EmptyState icon="ascent" title="No diagnosis for this run">
            The QG ascent map, the vertical cross-section, the forcing terms and the regional signal series appear here once the run has been
            diagnosed.
          </EmptyState>
        </>
      ) : (
        <p className="text-ink-muted">Loading the run…</p>
      )}
    </div>
  );
}
