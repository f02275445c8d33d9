import { createHash, randomUUID } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { Transform, type Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import { AppError } from '../errors.ts';

export interface StoredUpload {
  /** temporary path inside the storage folder; move it with keepUpload or drop it with discardUpload */
  tempPath: string;
  checksum: string;
  sizeBytes: number;
}

/**
 * Streams an upload to a temporary file in the storage folder, computing SHA-256 and enforcing the
 * size limit as bytes arrive: nothing is ever held in memory whole, and a refused upload leaves no file.
 */
export async function streamToStorage(source: Readable, storageDir: string, limitBytes: number): Promise<StoredUpload> {
  const incoming = path.join(storageDir, 'incoming');
  await fs.promises.mkdir(incoming, { recursive: true });
  const tempPath = path.join(incoming, `${randomUUID()}.part`);
  const hash = createHash('sha256');
  let sizeBytes = 0;
  const meter = new Transform({
    transform(chunk: Buffer, _enc, done) {
      sizeBytes += chunk.length;
      if (sizeBytes > limitBytes) {
        done(new AppError(413, 'too_large', `The file is larger than the upload limit of ${formatLimit(limitBytes)}.`));
        return;
      }
      hash.update(chunk);
      done(null, chunk);
    },
  });
  try {
    await pipeline(source, meter, fs.createWriteStream(tempPath, { flags: 'wx' }));
  } catch (err) {
    await fs.promises.rm(tempPath, { force: true });
    throw translateWriteError(err);
  }
  if (sizeBytes === 0) {
    await fs.promises.rm(tempPath, { force: true });
    throw new AppError(422, 'empty_file', 'The file is empty.');
  }
  return { tempPath, checksum: hash.digest('hex'), sizeBytes };
}

/** Moves a completed upload to its permanent, content-addressed place (the client's file name is never used). */
export async function keepUpload(upload: StoredUpload, storageDir: string): Promise<string> {
  const dir = path.join(storageDir, 'runs');
  await fs.promises.mkdir(dir, { recursive: true });
  const finalPath = runFilePath(storageDir, upload.checksum);
  await fs.promises.rename(upload.tempPath, finalPath);
  return finalPath;
}

export async function discardUpload(upload: StoredUpload): Promise<void> {
  await fs.promises.rm(upload.tempPath, { force: true });
}

export function runFilePath(storageDir: string, checksum: string): string {
  if (!/^[0-9a-f]{64}$/.test(checksum)) throw new Error('invalid checksum');
  return path.join(storageDir, 'runs', `${checksum}.bin`);
}

function translateWriteError(err: unknown): unknown {
  const code = (err as NodeJS.ErrnoException)?.code;
  if (code === 'ENOSPC' || code === 'EDQUOT' || code === 'EFBIG') {
    return new AppError(507, 'storage_full', 'The server has no room left for this file. Nothing was stored; ask an administrator to free space.');
  }
  if (code === 'ECONNRESET' || code === 'ERR_STREAM_PREMATURE_CLOSE' || (err as Error)?.message === 'aborted') {
    return new AppError(400, 'upload_aborted', 'The upload was interrupted before the file was complete. Nothing was stored.');
  }
  return err;
}

function formatLimit(bytes: number): string {
  return bytes >= 1e9 ? `${(bytes / 1e9).toFixed(1)} GB` : `${Math.round(bytes / 1e6)} MB`;
}
