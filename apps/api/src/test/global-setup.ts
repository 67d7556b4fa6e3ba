import PgBoss from 'pg-boss';
import pg from 'pg';
import { loadEnv } from '../config/env.js';
import { migrate } from '../db/data-source.js';
import { bossOptions, ensureQueues } from '../jobs/queue.js';

import type { TestProject } from 'vitest/node';

declare module 'vitest' {
  export interface ProvidedContext {
    templateDb: string;
  }
}

const STALE_AFTER_SECONDS = 3 * 3600;
const stamp = () => Math.floor(Date.now() / 1000);
/** Test databases carry their creation time, so runs that died can be cleaned up without touching live ones. */
export const testDbName = (kind: 'tpl' | 't', random: string) => `cp_${kind}_${stamp()}_${random}`;

/**
 * Builds one freshly migrated template database (with the job-queue schema) per test run;
 * every test file then clones it in a few milliseconds (see harness.ts).
 */
export default async function setup(project: TestProject): Promise<() => Promise<void>> {
  const templateDb = testDbName('tpl', Math.random().toString(36).slice(2, 8));
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
    const names: { datname: string }[] = (
      await admin.query(`SELECT datname FROM pg_database WHERE datname ~ '^cp_(tpl|t)_[0-9]+_'`)
    ).rows;
    for (const { datname } of names) {
      const created = Number(datname.split('_')[2]);
      if (stamp() - created > STALE_AFTER_SECONDS) await admin.query(`DROP DATABASE IF EXISTS "${datname}" WITH (FORCE)`);
    }
    await admin.query(`CREATE DATABASE ${templateDb}`);
    await admin.query(`GRANT CREATE, CONNECT ON DATABASE ${templateDb} TO "${env.DB_APP_USER}"`);
  } finally {
    await admin.end();
  }
  await migrate(env, templateDb);
  const boss = new PgBoss({ ...bossOptions(env, templateDb), supervise: false, schedule: false });
  await boss.start();
  await ensureQueues(boss);
  await boss.stop({ graceful: false, wait: true });
  project.provide('templateDb', templateDb);
  return async () => {
    const c = new pg.Client({
      host: env.DB_HOST,
      port: env.DB_PORT,
      user: env.DB_OWNER_USER,
      password: env.DB_OWNER_PASSWORD,
      database: env.DB_NAME,
    });
    await c.connect();
    await c.query(`DROP DATABASE IF EXISTS ${templateDb} WITH (FORCE)`).catch(() => undefined);
    await c.end();
  };
}
