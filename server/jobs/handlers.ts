/**
 * Which handler serves which queue. Used by the in-process worker of `npm start` and by the
 * stand-alone worker (`npm run worker`) alike.
 */
import { processMemberHandler, type MemberDeriver } from '../services/pipeline.ts';
import { readRunHandler, type RunsDeps } from '../services/runs.ts';
import { signalsDeriver } from '../services/signals.ts';
import { OmegaPool } from './omega-pool.ts';
import { QUEUE_NAMES, startWorkers } from './queue.ts';

/** Work that follows each member's diagnosis, in order. */
export const MEMBER_DERIVERS: MemberDeriver[] = [signalsDeriver];

export interface Workers {
  pool: OmegaPool;
  stop(): Promise<void>;
}

export async function startAllWorkers(deps: RunsDeps, options: { threads?: number } = {}): Promise<Workers> {
  const pool = new OmegaPool({ threads: options.threads });
  const pipeline = { ...deps, pool, derivers: MEMBER_DERIVERS };
  await startWorkers(
    deps.queue,
    {
      [QUEUE_NAMES.readRun]: readRunHandler(deps),
      [QUEUE_NAMES.processMember]: processMemberHandler(pipeline),
    },
    deps.logger,
  );
  return { pool, stop: () => pool.destroy() };
}
