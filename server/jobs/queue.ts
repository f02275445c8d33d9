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

export interface QueueOptions {
  /** PostgreSQL schema of the queue's tables: one per deployment (QUEUE_SCHEMA); tests give each app its own */
  schema: string;
  /**
   * A job whose worker died (process killed, machine lost) stays "active" until it expires; the
   * queue's maintenance then fails it by timeout and delivers it again (it counts as an attempt).
   * JOB_EXPIRE_SECONDS must exceed the longest member diagnosis; JOB_MAINTENANCE_SECONDS is how
   * often expired jobs are looked for. The fault drills set both short.
   */
  expireSeconds: number;
  maintenanceSeconds: number;
}

export const DEFAULT_QUEUE_OPTIONS: QueueOptions = { schema: 'pgboss', expireSeconds: 60 * 60, maintenanceSeconds: 120 };

export async function createQueue(databaseUrl: string, logger: Logger, options: QueueOptions = DEFAULT_QUEUE_OPTIONS): Promise<JobQueue> {
  const RETRY = { retryLimit: 3, retryDelay: 5, retryBackoff: true, expireInSeconds: options.expireSeconds } as const;
  const boss = new PgBoss({
    connectionString: databaseUrl,
    schema: options.schema,
    max: 4,
    supervise: true,
    schedule: false,
    maintenanceIntervalSeconds: options.maintenanceSeconds,
  });
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
