import PgBoss from 'pg-boss';
import type { EntityManager } from 'typeorm';
import type { Env } from '../config/env.js';
import { queueDefinitions, type QueueName } from './queues.js';

export type JobQueue = {
  /** Enqueues inside the caller's transaction, so the job exists exactly when the change commits. */
  send(tx: EntityManager, name: QueueName, data: object, options?: PgBoss.SendOptions): Promise<string | null>;
  boss: PgBoss;
  stop(): Promise<void>;
};

export function bossOptions(env: Env, database = env.DB_NAME): PgBoss.ConstructorOptions {
  return {
    host: env.DB_HOST,
    port: env.DB_PORT,
    database,
    user: env.DB_APP_USER,
    password: env.DB_APP_PASSWORD,
    schema: 'pgboss',
    application_name: 'counterpoise-jobs',
    max: 4,
  };
}

/** Creates every queue with its retry, backoff and dead-letter policy (idempotent). */
export async function ensureQueues(boss: PgBoss): Promise<void> {
  for (const q of queueDefinitions) {
    if (q.deadLetter) await boss.createQueue(q.deadLetter, { name: q.deadLetter, retentionDays: 30 });
    await boss.createQueue(q.name, { ...q.options, name: q.name, ...(q.deadLetter ? { deadLetter: q.deadLetter } : {}) });
  }
}

/** The API's handle on the queues: it sends, the worker process works. */
export async function createJobQueue(env: Env, database = env.DB_NAME): Promise<JobQueue> {
  const boss = new PgBoss({ ...bossOptions(env, database), supervise: false, schedule: false });
  boss.on('error', () => undefined);
  await boss.start();
  await ensureQueues(boss);
  return {
    boss,
    async send(tx, name, data, options = {}) {
      const db: PgBoss.Db = {
        async executeSql(text, values) {
          const rows: unknown = await tx.query(text, values);
          return { rows: Array.isArray(rows) ? rows : [] };
        },
      };
      return boss.send(name, data, { ...options, db });
    },
    async stop() {
      await boss.stop({ graceful: false, wait: true });
    },
  };
}
