import { EmptyState, PageHeader } from '@/components/Page.tsx';

export function RunsPage() {
  return (
    <div className="flex flex-col gap-4">
      <PageHeader title="Runs" subtitle="Every uploaded model run with its model, cycle, members, state and progress." />
      <EmptyState icon="runs" title="No model runs yet">
        Uploaded GRIB2 and NetCDF runs will be listed here with their processing state. Uploading is not yet enabled on this
        server.
      </EmptyState>
    </div>
  );
}
