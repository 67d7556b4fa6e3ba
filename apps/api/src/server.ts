import 'reflect-metadata';
import { pino } from 'pino';
import { buildApp } from './app.js';
import { loadEnv } from './config/env.js';
import { createDataSource } from './db/data-source.js';
import { createJobQueue } from './jobs/queue.js';
import { createMailer } from './modules/mail/mailer.js';

const env = loadEnv();
const logger = pino({ level: env.LOG_LEVEL, base: { service: 'api' } });
const ds = createDataSource(env);
await ds.initialize();
const jobs = await createJobQueue(env);
const mailer = createMailer(env, logger);
const app = buildApp({ env, ds, mailer, jobs }, logger);
const server = app.listen(env.PORT, '127.0.0.1', () => {
  logger.info({ url: `http://127.0.0.1:${env.PORT}` }, 'Counterpoise API listening');
});

async function shutdown(signal: string) {
  logger.info({ signal }, 'shutting down');
  server.close();
  await jobs.stop().catch(() => undefined);
  await ds.destroy().catch(() => undefined);
  process.exit(0);
}
process.on('SIGTERM', () => void shutdown('SIGTERM'));
process.on('SIGINT', () => void shutdown('SIGINT'));
