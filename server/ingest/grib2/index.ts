import { IngestError, type RunReader } from '../canonical.ts';

export async function openGrib2(_path: string): Promise<RunReader> {
  throw new IngestError('GRIB2', 'reader not built yet');
}
