import { EmptyState, PageHeader } from '@/components/Page.tsx';

export function OutboxPage() {
  return (
    <div className="flex flex-col gap-4">
      <PageHeader title="Outbox" subtitle="Development only: the mails the local mail catcher received." />
      <EmptyState icon="outbox" title="No mail caught">
        Regime-call e-mails sent while developing land here instead of in anyone's inbox.
      </EmptyState>
    </div>
  );
}
