/**
 * The work queue (pg-boss on the same PostgreSQL). Delivery is at least once, so every handler
 * is idempotent: it checks the state it is asked to move from before doing anything.
 */
import PgBoss from 'pg-boss';
import type { Logger } from '../logger.ts';

export const QUEUE_NAMES = {
  readRun: 'run-read',
  processMember: 'member-process',
} as const;

export type QueueName = (typeof QUEUE_NAMES)[keyof typeof QUEUE_NAMES];

export interface RunJob {
  runId: string;
  member?: number;
}

export interface JobQueue {
  send(name: QueueName, data: object): Promise<string | null>;
  boss: PgBoss;
  stop(): Promise<void>;
}

/**
 * A job whose worker died (process killed, machine lost) stays "active" until it expires; the
 * queue's maintenance then fails it by timeout and delivers it again (it counts as an attempt).
 * JOB_EXPIRE_SECONDS: how long one job may run before it counts as lost (default 3600 s; it must
 * exceed the longest member diagnosis). JOB_MAINTENANCE_SECONDS: how often expired jobs are looked
 * for (default 120 s). The fault drills set both short.
 */
function secondsFromEnv(name: string, fallback: number): number {
  const raw = process.env[name];
  if (raw === undefined || raw === '') return fallback;
  const value = Number(raw);
  if (!Number.isInteger(value) || value < 1) throw new Error(`${name} must be a whole number of seconds (at least 1), got "${raw}"`);
  return value;
}

export async function createQueue(databaseUrl: string, logger: Logger): Promise<JobQueue> {
  const RETRY = { retryLimit: 3, retryDelay: 5, retryBackoff: true, expireInSeconds: secondsFromEnv('JOB_EXPIRE_SECONDS', 60 * 60) } as const;
  const maintenanceIntervalSeconds = secondsFromEnv('JOB_MAINTENANCE_SECONDS', 120);
  const boss = new PgBoss({ connectionString: databaseUrl, schema: 'pgboss', max: 4, supervise: true, schedule: false, maintenanceIntervalSeconds });
  boss.on('error', (err) => logger.error({ err }, 'queue error'));
  await boss.start();
  for (const name of Object.values(QUEUE_NAMES)) await boss.createQueue(name, { name, ...RETRY });
  return {
    boss,
    send: (name, data) => boss.send(name, data, RETRY),
    stop: () => boss.stop({ graceful: true, timeout: 10_000 }),
  };
}

export type JobHandler<T = RunJob> = (job: PgBoss.JobWithMetadata<T>) => Promise<void>;

/** Starts workers for the given handlers, one job at a time per queue (the numerics use their own thread pool). */
export async function startWorkers(queue: JobQueue, handlers: Partial<Record<QueueName, JobHandler<never>>>, logger: Logger): Promise<void> {
  for (const [name, handler] of Object.entries(handlers) as [QueueName, JobHandler<never>][]) {
    await queue.boss.work<RunJob>(name, { includeMetadata: true, batchSize: 1, pollingIntervalSeconds: 1 }, async (jobs) => {
      for (const job of jobs) {
        const log = logger.child({ queue: name, jobId: job.id, runId: job.data.runId, attempt: job.retryCount + 1 });
        log.info('job started');
        await handler(job as never);
        log.info('job done');
      }
    });
  }
}
