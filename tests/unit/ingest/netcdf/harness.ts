/** Test helper: opens a file through openRun and reads every field, classifying the outcome. */
import { IngestError, openRun } from '../../../../server/ingest/index.ts';

export type Outcome = { kind: 'ok'; fields: number } | { kind: 'ingest-error'; error: IngestError };

async function readAll(path: string): Promise<Outcome> {
  try {
    const reader = await openRun(path);
    let fields = 0;
    try {
      for (const v of reader.info.variables) {
        for (const member of reader.info.members.slice(0, 3)) {
          for (const step of reader.info.steps.slice(0, 3)) {
            await reader.readField(v.name, member, step);
            fields++;
          }
        }
      }
    } finally {
      await reader.close();
    }
    return { kind: 'ok', fields };
  } catch (e) {
    if (e instanceof IngestError) return { kind: 'ingest-error', error: e };
    throw new Error(`not an IngestError for ${path}: ${e instanceof Error ? `${e.name}: ${e.message}` : String(e)}`);
  }
}

/** Opens and reads the file; any exception other than IngestError, or a hang, fails. */
export async function outcome(path: string, timeoutMs = 5000): Promise<Outcome> {
  let timer: NodeJS.Timeout | undefined;
  const hang = new Promise<never>((_, reject) => {
    timer = setTimeout(() => reject(new Error(`reading ${path} did not finish within ${timeoutMs} ms`)), timeoutMs);
  });
  try {
    return await Promise.race([readAll(path), hang]);
  } finally {
    clearTimeout(timer);
  }
}

export async function expectIngestError(path: string, pattern: RegExp): Promise<IngestError> {
  const o = await outcome(path);
  if (o.kind !== 'ingest-error') throw new Error(`expected an IngestError matching ${pattern} for ${path}, but it read ${o.fields} fields`);
  if (!pattern.test(o.error.message)) throw new Error(`IngestError "${o.error.message}" does not match ${pattern}`);
  return o.error;
}
