import { open } from 'node:fs/promises';
import { IngestError, type FileFormat, type RunReader } from './canonical.ts';
import { openGrib2 } from './grib2/index.ts';
import { openNetcdf } from './netcdf/index.ts';

export * from './canonical.ts';

const HDF5_SIGNATURE = Buffer.from([0x89, 0x48, 0x44, 0x46, 0x0d, 0x0a, 0x1a, 0x0a]);

/** Chooses the reader by the file's magic bytes, never by its name. */
export async function sniffFormat(path: string): Promise<FileFormat> {
  const handle = await open(path, 'r');
  try {
    const head = Buffer.alloc(8);
    const { bytesRead } = await handle.read(head, 0, 8, 0);
    if (bytesRead === 0) throw new IngestError('file', 'the file is empty');
    if (head.subarray(0, 4).toString('latin1') === 'GRIB') return 'grib2';
    if (head.subarray(0, 3).toString('latin1') === 'CDF') {
      if (head[3] === 1 || head[3] === 2) return 'netcdf3';
      if (head[3] === 5) throw new IngestError('NetCDF', 'CDF-5 (64-bit data) files are not supported; convert with `nccopy -k nc4 in.nc out.nc`');
    }
    if (bytesRead === 8 && head.equals(HDF5_SIGNATURE)) return 'netcdf4';
    throw new IngestError('file', 'not a GRIB2, NetCDF-3 or NetCDF-4 file (its first bytes match none of them)');
  } finally {
    await handle.close();
  }
}

/** Opens a model-run file as a canonical pressure-level grid. */
export async function openRun(path: string): Promise<RunReader> {
  const format = await sniffFormat(path);
  return format === 'grib2' ? openGrib2(path) : openNetcdf(path, format);
}
