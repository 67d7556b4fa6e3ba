import 'reflect-metadata';
import cluster from 'node:cluster';
import { pino } from 'pino';
import { buildApp } from './app.js';
import { loadEnv } from './config/env.js';
import { createDataSource } from './db/data-source.js';
import { createJobQueue } from './jobs/queue.js';
import { createMailer } from './modules/mail/mailer.js';

const env = loadEnv();
const logger = pino({ level: env.LOG_LEVEL, base: { service: 'api' } });

if (cluster.isPrimary && env.API_PROCESSES > 1) {
  // API_PROCESSES > 1: this process only keeps that many API processes running on PORT (the
  // API is stateless, so any of them can answer any request). They share one session secret:
  // a generated one is handed to all of them.
  let stopping = false;
  const fork = () => cluster.fork({ JWT_SECRET: env.JWT_SECRET });
  for (let i = 0; i < env.API_PROCESSES; i++) fork();
  cluster.on('exit', (worker, code, signal) => {
    if (stopping) {
      if (Object.keys(cluster.workers ?? {}).length === 0) process.exit(0);
      return;
    }
    logger.error({ pid: worker.process.pid, code, signal }, 'API process ended; starting another');
    setTimeout(fork, 500);
  });
  const stop = (signal: NodeJS.Signals) => {
    stopping = true;
    logger.info({ signal }, 'stopping the API processes');
    for (const worker of Object.values(cluster.workers ?? {})) worker?.process.kill(signal);
    if (Object.keys(cluster.workers ?? {}).length === 0) process.exit(0);
  };
  process.on('SIGTERM', () => stop('SIGTERM'));
  process.on('SIGINT', () => stop('SIGINT'));
  logger.info({ processes: env.API_PROCESSES, url: `http://127.0.0.1:${env.PORT}` }, 'Counterpoise API starting its processes');
} else {
  const ds = createDataSource(env);
  await ds.initialize();
  const jobs = await createJobQueue(env);
  const mailer = createMailer(env, logger);
  const app = buildApp({ env, ds, mailer, jobs }, logger);
  const server = app.listen(env.PORT, '127.0.0.1', () => {
    logger.info({ url: `http://127.0.0.1:${env.PORT}`, pid: process.pid }, 'Counterpoise API listening');
  });

  const shutdown = async (signal: string) => {
    logger.info({ signal }, 'shutting down');
    server.close();
    await jobs.stop().catch(() => undefined);
    await ds.destroy().catch(() => undefined);
    process.exit(0);
  };
  process.on('SIGTERM', () => void shutdown('SIGTERM'));
  process.on('SIGINT', () => void shutdown('SIGINT'));
}
