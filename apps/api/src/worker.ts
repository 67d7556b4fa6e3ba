import 'reflect-metadata';
import PgBoss from 'pg-boss';
import { pino } from 'pino';
import { loadEnv } from './config/env.js';
import { createDataSource } from './db/data-source.js';
import { jobHandlers } from './jobs/handlers.js';
import { bossOptions, createJobQueue, ensureQueues } from './jobs/queue.js';
import { createMailer } from './modules/mail/mailer.js';
import { scheduleJobs } from './jobs/schedules.js';

/** The job worker: its own process, so any number can run beside any number of API processes. */
const env = loadEnv();
const logger = pino({ level: env.LOG_LEVEL, base: { service: 'worker' } });
const ds = createDataSource(env);
await ds.initialize();
const boss = new PgBoss(bossOptions(env));
boss.on('error', (err) => logger.error({ err }, 'job queue error'));
await boss.start();
await ensureQueues(boss);
const jobs = await createJobQueue(env);
const ctx = { env, ds, mailer: createMailer(env, logger), jobs };
for (const h of jobHandlers) {
  await boss.work(h.queue, { batchSize: h.batchSize ?? 1, pollingIntervalSeconds: 0.5 }, async (batch) => {
    const log = logger.child({ queue: h.queue, jobIds: batch.map((j) => j.id) });
    await h.handle(ctx, batch as PgBoss.Job<object>[], log);
  });
}
await scheduleJobs(boss);
logger.info({ queues: jobHandlers.map((h) => h.queue) }, 'Counterpoise worker started');

async function shutdown(signal: string) {
  logger.info({ signal }, 'worker shutting down');
  await boss.stop({ graceful: true, timeout: 5000, wait: true }).catch(() => undefined);
  await jobs.stop().catch(() => undefined);
  await ds.destroy().catch(() => undefined);
  process.exit(0);
}
process.on('SIGTERM', () => void shutdown('SIGTERM'));
process.on('SIGINT', () => void shutdown('SIGINT'));
