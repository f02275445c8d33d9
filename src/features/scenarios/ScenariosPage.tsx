import { CautionNote, EmptyState, PageHeader } from '@/components/Page.tsx';
import { CAUTIONS } from '@shared/cautions.ts';

export function ScenariosPage() {
  return (
    <div className="flex flex-col gap-4">
      <PageHeader title="Scenarios" subtitle="Precipitation, cloud, solar and hydro per region, day and scenario, with weighted P10/P50/P90." />
      <EmptyState icon="scenarios" title="No scenarios yet">
        Scenario rows appear once a run has been diagnosed and its regional signals computed.
      </EmptyState>
      <CautionNote>{CAUTIONS.join(' ')}</CautionNote>
    </div>
  );
}
