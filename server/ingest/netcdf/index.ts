/**
 * NetCDF entry point: opens the container (classic NetCDF-3 or NetCDF-4/HDF5) and interprets
 * it under the CF conventions as a canonical pressure-level run.
 */
import { IngestError, type RunReader } from '../canonical.ts';
import { openCf } from './cf-reader.ts';
import { Nc3Source } from './nc3.ts';
import { Nc4Source } from './nc4.ts';
import type { NcSource } from './source.ts';

export async function openNetcdf(path: string, format: 'netcdf3' | 'netcdf4'): Promise<RunReader> {
  let src: NcSource;
  try {
    src = format === 'netcdf3' ? await Nc3Source.open(path) : await Nc4Source.open(path);
  } catch (e) {
    throw asIngestError(e, format === 'netcdf3' ? 'NetCDF-3' : 'NetCDF-4');
  }
  try {
    return guarded(await openCf(src));
  } catch (e) {
    await src.close();
    throw asIngestError(e, 'NetCDF');
  }
}

function guarded(reader: RunReader): RunReader {
  return {
    info: reader.info,
    readField: (name, member, step) => reader.readField(name, member, step).catch((e: unknown) => Promise.reject(asIngestError(e, `variable ${name}`))),
    close: () => reader.close(),
  };
}

/** Anything unexpected from a damaged file still reaches the caller as an IngestError. */
function asIngestError(e: unknown, where: string): IngestError {
  if (e instanceof IngestError) return e;
  const message = e instanceof Error ? e.message : String(e);
  return new IngestError(where, `cannot read the file: ${message.split('\n')[0].slice(0, 300)}`);
}
