import PgBoss from 'pg-boss';
import pg from 'pg';
import { loadEnv } from '../config/env.js';
import { migrate } from '../db/data-source.js';
import { bossOptions, ensureQueues } from '../jobs/queue.js';

export const TEMPLATE_DB = 'cp_test_template';

/**
 * Builds one freshly migrated template database (with the job-queue schema) per test run;
 * every test file then clones it in a few milliseconds (see harness.ts).
 */
export default async function setup(): Promise<void> {
  const env = loadEnv({ ...process.env, NODE_ENV: 'test' });
  const admin = new pg.Client({
    host: env.DB_HOST,
    port: env.DB_PORT,
    user: env.DB_OWNER_USER,
    password: env.DB_OWNER_PASSWORD,
    database: env.DB_NAME,
  });
  await admin.connect();
  try {
    const stale: { datname: string }[] = (
      await admin.query(`SELECT datname FROM pg_database WHERE datname LIKE 'cp_t_%' OR datname = $1`, [TEMPLATE_DB])
    ).rows;
    for (const { datname } of stale) await admin.query(`DROP DATABASE IF EXISTS "${datname}" WITH (FORCE)`);
    await admin.query(`CREATE DATABASE ${TEMPLATE_DB}`);
    await admin.query(`GRANT CREATE, CONNECT ON DATABASE ${TEMPLATE_DB} TO "${env.DB_APP_USER}"`);
  } finally {
    await admin.end();
  }
  await migrate(env, TEMPLATE_DB);
  const boss = new PgBoss({ ...bossOptions(env, TEMPLATE_DB), supervise: false, schedule: false });
  await boss.start();
  await ensureQueues(boss);
  await boss.stop({ graceful: false, wait: true });
}
