import { EmptyState, PageHeader } from '@/components/Page.tsx';
import { RegimeNamesSection } from './RegimeNamesSection.tsx';
import { RoleMappingSection } from './RoleMappingSection.tsx';
import { SubscriptionsSection } from './SubscriptionsSection.tsx';

export function AdminPage() {
  return (
    <div className="flex flex-col gap-4">
      <PageHeader title="Admin" subtitle="Regions, calibration sets, role mapping and mail subscriptions." />
      <div className="grid gap-4 lg:grid-cols-2">
        <EmptyState icon="admin" title="No regions loaded">
          Hydro catchments and solar zones (GeoJSON with plant parameters) will be listed here with a map preview.
        </EmptyState>
        <RoleMappingSection />
        <SubscriptionsSection />
        <RegimeNamesSection />
      </div>
    </div>
  );
}
