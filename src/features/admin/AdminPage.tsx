import { PageHeader } from '@/components/Page.tsx';
import { useCan } from '@/lib/session.ts';
import { CalibrationSection } from './CalibrationSection.tsx';
import { ApiTokensSection } from './ApiTokensSection.tsx';
import { RegionsSection } from './RegionsSection.tsx';
import { RegimeNamesSection } from './RegimeNamesSection.tsx';
import { RoleMappingSection } from './RoleMappingSection.tsx';
import { SubscriptionsSection } from './SubscriptionsSection.tsx';

/** Admins see every section; meteorologists reach this screen for the calibration sets. */
export function AdminPage() {
  const isAdmin = useCan('PUT', '/api/admin/role-mappings');
  return (
    <div className="flex flex-col gap-4">
      <PageHeader title="Admin" subtitle="Regions, calibration sets, role mapping and mail subscriptions." />
      <div className="grid gap-4 lg:grid-cols-2">
        {isAdmin ? <RegionsSection /> : null}
        <CalibrationSection />
        {isAdmin ? <RoleMappingSection /> : null}
        {isAdmin ? <ApiTokensSection /> : null}
        {isAdmin ? <SubscriptionsSection /> : null}
        {isAdmin ? <RegimeNamesSection /> : null}
      </div>
    </div>
  );
}
