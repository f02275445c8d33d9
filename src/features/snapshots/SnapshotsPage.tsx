import { EmptyState, PageHeader } from '@/components/Page.tsx';

export function SnapshotsPage() {
  return (
    <div className="flex flex-col gap-4">
      <PageHeader title="Snapshots" subtitle="Sealed, verifiable records of what the desk published, and the audit trail." />
      <EmptyState icon="seal" title="No snapshots sealed">
        Each sealed snapshot will show who sealed it, when, what it covers and its short hash, with a verify action.
      </EmptyState>
    </div>
  );
}
