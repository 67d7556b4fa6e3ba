import { randomBytes } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import bcrypt from 'bcryptjs';
import pg from 'pg';
import { pino } from 'pino';
import supertest from 'supertest';
import type { Express } from 'express';
import type TestAgent from 'supertest/lib/agent.js';
import { buildApp } from '../app.js';
import type { AppContext } from '../app-context.js';
import { loadEnv, repoRoot, type Env } from '../config/env.js';
import { createDataSource } from '../db/data-source.js';
import { createJobQueue } from '../jobs/queue.js';
import { startFakeSmtp } from '../mail/fake-smtp.js';
import { createMailer } from '../modules/mail/mailer.js';
import { inject } from 'vitest';
import { testDbName } from './global-setup.js';

export type TestContext = {
  app: Express;
  ctx: AppContext;
  env: Env;
  database: string;
  /** Mail the API sent, as received by the fake SMTP server. */
  smtp: Awaited<ReturnType<typeof startFakeSmtp>>;
  /** Runs SQL as the database owner (for setting up and for tamper tests), not as the app. */
  ownerQuery: <T = Record<string, unknown>>(sql: string, params?: unknown[]) => Promise<T[]>;
  close(): Promise<void>;
};

export const TEST_PASSWORD = 'correct-horse-battery';
let passwordHash: string | undefined;

function ownerClient(env: Env, database: string) {
  return new pg.Client({
    host: env.DB_HOST,
    port: env.DB_PORT,
    user: env.DB_OWNER_USER,
    password: env.DB_OWNER_PASSWORD,
    database,
  });
}

/** A fresh database cloned from the migrated template, the real API on it, and a fake SMTP server. */
export async function createTestContext(overrides: Partial<Record<string, string>> = {}): Promise<TestContext> {
  const database = testDbName('t', randomBytes(4).toString('hex'));
  const base = loadEnv({ ...process.env, NODE_ENV: 'test', LOG_LEVEL: 'silent', ...overrides });
  const admin = ownerClient(base, base.DB_NAME);
  await admin.connect();
  await admin.query(`CREATE DATABASE ${database} TEMPLATE ${inject('templateDb')}`);
  await admin.query(`GRANT CREATE, CONNECT ON DATABASE ${database} TO "${base.DB_APP_USER}"`);
  await admin.end();

  const outboxDir = fs.mkdtempSync(path.join(os.tmpdir(), 'cp-outbox-'));
  const smtp = await startFakeSmtp({ port: 0, outboxDir });
  const env: Env = {
    ...base,
    DB_NAME: database,
    SMTP_PORT: smtp.port,
    outboxDir,
    uploadDir: fs.mkdtempSync(path.join(os.tmpdir(), 'cp-uploads-')),
  };
  const ds = createDataSource(env);
  await ds.initialize();
  const jobs = await createJobQueue(env, database);
  const ctx: AppContext = { env, ds, mailer: createMailer(env), jobs };
  const app = buildApp(ctx, pino({ level: 'silent' }));
  const owner = ownerClient(env, database);
  await owner.connect();

  return {
    app,
    ctx,
    env,
    database,
    smtp,
    ownerQuery: async (sql, params) => (await owner.query(sql, params)).rows,
    async close() {
      await jobs.stop().catch(() => undefined);
      await ds.destroy().catch(() => undefined);
      await owner.end().catch(() => undefined);
      await smtp.close().catch(() => undefined);
      const drop = ownerClient(base, base.DB_NAME);
      await drop.connect();
      await drop.query(`DROP DATABASE IF EXISTS ${database} WITH (FORCE)`).catch(() => undefined);
      await drop.end();
    },
  };
}

type Role = 'coordinator' | 'statistician' | 'sponsor' | 'auditor';

/** Inserts an active user (as the owner, so factories write no audit entries of their own). */
export async function createUser(
  t: TestContext,
  opts: { email?: string; isAdmin?: boolean; memberships?: { studyId: string; role: Role; siteIds?: string[] }[] } = {},
): Promise<{ id: string; email: string }> {
  passwordHash ??= await bcrypt.hash(TEST_PASSWORD, 4);
  const email = opts.email ?? `user-${randomBytes(4).toString('hex')}@test.example`;
  const rows = await t.ownerQuery<{ id: string }>(
    `INSERT INTO app_user (email, display_name, password_hash, is_admin, status) VALUES ($1, $2, $3, $4, 'active') RETURNING id`,
    [email, email.split('@')[0], passwordHash, opts.isAdmin ?? false],
  );
  const id = rows[0]!.id;
  for (const m of opts.memberships ?? []) {
    await t.ownerQuery(`INSERT INTO membership (user_id, study_id, role, site_ids) VALUES ($1, $2, $3, $4::uuid[])`, [
      id,
      m.studyId,
      m.role,
      m.siteIds ?? [],
    ]);
  }
  return { id, email };
}

/** Inserts a study with sites and arms directly (owner connection). */
export async function createStudy(
  t: TestContext,
  opts: {
    code?: string;
    kind?: 'randomized_trial' | 'observational_cohort';
    blinding?: 'blinded' | 'open_label';
    sites?: string[];
    arms?: string[];
    design?: Record<string, unknown>;
  } = {},
): Promise<{ id: string; siteIds: string[]; armIds: string[] }> {
  const code = opts.code ?? `S${randomBytes(3).toString('hex').toUpperCase()}`;
  const rows = await t.ownerQuery<{ id: string }>(
    `INSERT INTO study (code, title, kind, blinding, status, target_sample_size, design)
     VALUES ($1, $2, $3, $4, 'enrolling', 200, $5) RETURNING id`,
    [code, `Study ${code}`, opts.kind ?? 'randomized_trial', opts.blinding ?? 'blinded', JSON.stringify(opts.design ?? {})],
  );
  const id = rows[0]!.id;
  const siteIds: string[] = [];
  for (const s of opts.sites ?? ['S1', 'S2']) {
    const r = await t.ownerQuery<{ id: string }>(
      `INSERT INTO site (study_id, code, name, enrollment_target) VALUES ($1, $2, $3, 50) RETURNING id`,
      [id, s, `Site ${s}`],
    );
    siteIds.push(r[0]!.id);
  }
  const armIds: string[] = [];
  for (const [i, a] of (opts.arms ?? ['A', 'B']).entries()) {
    const r = await t.ownerQuery<{ id: string }>(
      `INSERT INTO arm (study_id, code, name, ratio, position) VALUES ($1, $2, $3, 1, $4) RETURNING id`,
      [id, a, `Arm ${a}`, i],
    );
    armIds.push(r[0]!.id);
  }
  return { id, siteIds, armIds };
}

export type SignedInAgent = {
  agent: TestAgent;
  csrf: string;
  /** Agent calls with the CSRF header set, for unsafe methods. */
  post: (url: string) => supertest.Test;
  put: (url: string) => supertest.Test;
  patch: (url: string) => supertest.Test;
  delete: (url: string) => supertest.Test;
  get: (url: string) => supertest.Test;
};

export async function signIn(t: TestContext, email: string, password = TEST_PASSWORD): Promise<SignedInAgent> {
  const agent = supertest.agent(t.app);
  const res = await agent.post('/api/auth/sign-in').send({ email, password });
  if (res.status !== 200) throw new Error(`sign-in of ${email} failed: ${res.status} ${JSON.stringify(res.body)}`);
  const csrf: string = res.body.me.csrfToken;
  return {
    agent,
    csrf,
    post: (url) => agent.post(url).set('X-CSRF-Token', csrf),
    put: (url) => agent.put(url).set('X-CSRF-Token', csrf),
    patch: (url) => agent.patch(url).set('X-CSRF-Token', csrf),
    delete: (url) => agent.delete(url).set('X-CSRF-Token', csrf),
    get: (url) => agent.get(url),
  };
}

/** The cluster's superuser over our own Unix socket (docker-free-db trusts only that). */
export async function superuserQuery<T = Record<string, unknown>>(t: TestContext, sql: string, params?: unknown[]) {
  const port = t.env.DB_PORT;
  const candidates = [path.resolve(repoRoot, process.env.DB_DIR ?? '.data/pg', 'run'), `/tmp/counterpoise-pg-${port}/run`];
  const host = candidates.find((dir) => fs.existsSync(path.join(dir, `.s.PGSQL.${port}`)));
  if (!host) throw new Error(`No PostgreSQL socket found in ${candidates.join(' or ')}`);
  const client = new pg.Client({ host, port, user: 'postgres', database: t.database });
  await client.connect();
  try {
    return (await client.query(sql, params)).rows as T[];
  } finally {
    await client.end();
  }
}

export async function auditCount(t: TestContext): Promise<number> {
  const rows = await t.ownerQuery<{ n: number }>(`SELECT count(*)::int AS n FROM audit_event`);
  return rows[0]!.n;
}
