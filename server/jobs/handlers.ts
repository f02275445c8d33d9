/**
 * Which handler serves which queue. Used by the in-process worker of `npm start` and by the
 * stand-alone worker (`npm run worker`) alike.
 */
import { readRunHandler, type RunsDeps } from '../services/runs.ts';
import { QUEUE_NAMES, startWorkers } from './queue.ts';

export async function startAllWorkers(deps: RunsDeps): Promise<void> {
  await startWorkers(deps.queue, { [QUEUE_NAMES.readRun]: readRunHandler(deps) }, deps.logger);
}
