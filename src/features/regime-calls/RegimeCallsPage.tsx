import { EmptyState, PageHeader } from '@/components/Page.tsx';

export function RegimeCallsPage() {
  return (
    <div className="flex flex-col gap-4">
      <PageHeader title="Regime calls" subtitle="The desk's morning call: regime, confidence, valid period, cluster weights and narrative." />
      <EmptyState icon="call" title="No regime calls published">
        Published calls and their earlier versions will be listed here, newest first.
      </EmptyState>
    </div>
  );
}
