import { PageHeader } from '@/components/Page.tsx';
import { CalibrationSection } from './CalibrationSection.tsx';
import { RegionsSection } from './RegionsSection.tsx';
import { RoleMappingSection } from './RoleMappingSection.tsx';

export function AdminPage() {
  return (
    <div className="flex flex-col gap-4">
      <PageHeader title="Admin" subtitle="Regions, calibration sets, role mapping and mail subscriptions." />
      <div className="grid gap-4 lg:grid-cols-2">
        <RegionsSection />
        <CalibrationSection />
        <RoleMappingSection />
      </div>
    </div>
  );
}
