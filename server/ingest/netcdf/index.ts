import { IngestError, type RunReader } from '../canonical.ts';

export async function openNetcdf(_path: string, _format: 'netcdf3' | 'netcdf4'): Promise<RunReader> {
  throw new IngestError('NetCDF', 'reader not built yet');
}
