import { useParams } from 'react-router-dom';
import { EmptyState, PageHeader } from '@/components/Page.tsx';

export function RunViewPage() {
  const { runId } = useParams();
  return (
    <div className="flex flex-col gap-4">
      <PageHeader title="Run view" subtitle={`Run ${runId ?? ''}: ascent maps, cross-sections, forcing terms and regional signals.`} />
      <EmptyState icon="ascent" title="No diagnosis for this run">
        The QG ascent map, the vertical cross-section, the forcing terms and the regional signal series appear here once the run has been
        diagnosed.
      </EmptyState>
    </div>
  );
}
