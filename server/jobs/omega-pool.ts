/**
 * A worker-thread pool (piscina) that runs QG omega diagnoses, one (member, step) per task,
 * sized to the machine's cores. Typed arrays cross the thread boundary by transfer, not copy:
 * the input arrays given to `run` are detached afterwards (pass copies if you still need them).
 *
 * The worker is TypeScript run from source, so each worker thread is started with the tsx
 * loader (`--import tsx`): worker threads inherit no loader hooks registered in the parent.
 */
import { availableParallelism } from 'node:os';
import { createRequire } from 'node:module';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { Piscina } from 'piscina';
import type { QgAxes } from '../science/qg/grid.ts';
import type { QgDiagnosis } from '../science/qg/diagnose.ts';
import { QgInputError, type QgErrorCode } from '../science/qg/errors.ts';

export interface OmegaTask {
  member: number;
  /** forecast step, hours */
  step: number;
  axes: QgAxes;
  /** geopotential m2 s-2, temperature K, model omega Pa s-1 (optional): [level][lat][lon] */
  z: Float32Array | Float64Array;
  t: Float32Array | Float64Array;
  w?: Float32Array | Float64Array | null;
  /** also return the forcing fields (three more full-grid arrays) */
  includeForcing?: boolean;
}

export type OmegaTaskResult = Omit<QgDiagnosis, 'forcing'> & {
  member: number;
  step: number;
  forcing: QgDiagnosis['forcing'] | null;
};

const WORKER_FILE = fileURLToPath(new URL('./omega-worker.ts', import.meta.url));

function tsxLoaderArgs(): string[] {
  const loader = createRequire(import.meta.url).resolve('tsx');
  return ['--import', pathToFileURL(loader).href];
}

/** A standalone copy when the view does not own its whole buffer (transferring would detach more than it). */
function ownBuffer<T extends Float32Array | Float64Array>(a: T): T {
  return a.byteOffset === 0 && a.byteLength === a.buffer.byteLength ? a : (a.slice() as T);
}

export class OmegaPool {
  private readonly piscina: Piscina;
  readonly threads: number;

  constructor(options: { threads?: number } = {}) {
    this.threads = Math.max(1, options.threads ?? availableParallelism());
    this.piscina = new Piscina({
      filename: WORKER_FILE,
      minThreads: this.threads,
      maxThreads: this.threads,
      execArgv: WORKER_FILE.endsWith('.ts') ? tsxLoaderArgs() : [],
    });
  }

  /** Diagnoses one (member, step). Rejects with the worker's error (e.g. a QgInputError message). */
  async run(task: OmegaTask): Promise<OmegaTaskResult> {
    const sent: OmegaTask = {
      ...task,
      // The axes are shared by every task of a run: always send copies (they are small).
      axes: { lat: task.axes.lat.slice(), lon: task.axes.lon.slice(), levels: task.axes.levels.slice() },
      z: ownBuffer(task.z),
      t: ownBuffer(task.t),
      w: task.w ? ownBuffer(task.w) : null,
    };
    const transferList = [sent.z.buffer, sent.t.buffer, sent.axes.lat.buffer, sent.axes.lon.buffer, sent.axes.levels.buffer];
    if (sent.w) transferList.push(sent.w.buffer);
    try {
      return await this.piscina.run(sent, { transferList: transferList as ArrayBuffer[] });
    } catch (err) {
      // The worker marks refusals of the input so that they stay refusals (not retried as faults).
      const message = (err as Error)?.message ?? '';
      const marked = /^QG-REFUSAL:([\w-]+):([\s\S]*)$/.exec(message);
      if (marked) throw new QgInputError(marked[1] as QgErrorCode, marked[2]);
      throw err;
    }
  }

  async destroy(): Promise<void> {
    await this.piscina.destroy();
  }
}
