/**
 * Balance monitoring benchmark (figures only; nothing here asserts on time).
 *
 *   cd apps/api && node --import tsx bench/balance.bench.ts [--participants 100000] [--quick] [--reuse]
 *     [--only full,incremental,get,stream] [--out figures.json]
 *
 * Builds a throwaway database `cp_bench_balance` with one randomized study of 100,000
 * participants, 30 covariates (20 continuous, 5 binary, 5 categorical with 4 levels) and 50
 * sites, then measures: a full recompute; an incremental recompute after one enrollment;
 * GET /balance under 50 concurrent clients (autocannon); and, with a real pg-boss worker, the
 * time from an enrollment's commit to a snapshot that includes it while 20 clients enroll.
 * Enrollments are written by SQL transactions that enqueue 'balance.recompute' exactly as the
 * enrollment routes do (singletonKey = study), not through the HTTP enrollment route.
 */
import 'reflect-metadata';
import { execFile } from 'node:child_process';
import { randomUUID } from 'node:crypto';
import fs from 'node:fs';
import http from 'node:http';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import bcrypt from 'bcryptjs';
import pg from 'pg';
import PgBoss from 'pg-boss';
import { pino } from 'pino';
import type { AppContext } from '../src/app-context.js';
import { loadEnv } from '../src/config/env.js';
import { startApi, stopApi } from './api-process.js';
import { createDataSource, migrate } from '../src/db/data-source.js';
import { bossOptions, createJobQueue, ensureQueues } from '../src/jobs/queue.js';
import { startFakeSmtp } from '../src/mail/fake-smtp.js';
import { createMailer } from '../src/modules/mail/mailer.js';
import { balanceRecomputeHandler, recomputeBalance } from '../src/modules/balance/balance-recompute.job.js';

const DB = 'cp_bench_balance';
const args = process.argv.slice(2);
const arg = (name: string, fallback: number) => {
  const i = args.indexOf(`--${name}`);
  return i >= 0 ? Number(args[i + 1]) : fallback;
};
const PARTICIPANTS = arg('participants', 100_000);
const SITES = 50;
const CONTINUOUS = 20;
const BINARY = 5;
const CATEGORICAL = 5;
const quick = args.includes('--quick');
/** Reuse the database of a previous run (skips the two-minute seeding). */
const reuse = args.includes('--reuse');
const only = (() => {
  const i = args.indexOf('--only');
  return i >= 0 ? new Set(String(args[i + 1]).split(',')) : null;
})();
const part = (name: string) => !only || only.has(name);

const here = path.dirname(fileURLToPath(import.meta.url));
const pct = (xs: number[], p: number) => {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.ceil((p / 100) * s.length) - 1)] ?? NaN;
};
const ms = (x: number) => `${x.toFixed(1)} ms`;

async function setupDatabase() {
  const base = loadEnv({ ...process.env, LOG_LEVEL: 'silent' });
  const admin = new pg.Client({
    host: base.DB_HOST,
    port: base.DB_PORT,
    user: base.DB_OWNER_USER,
    password: base.DB_OWNER_PASSWORD,
    database: base.DB_NAME,
  });
  await admin.connect();
  await admin.query(`DROP DATABASE IF EXISTS ${DB} WITH (FORCE)`);
  await admin.query(`CREATE DATABASE ${DB}`);
  await admin.query(`GRANT CREATE, CONNECT ON DATABASE ${DB} TO "${base.DB_APP_USER}"`);
  await admin.end();
  await migrate(base, DB);
  const boss = new PgBoss({ ...bossOptions(base, DB), supervise: false, schedule: false });
  await boss.start();
  await ensureQueues(boss);
  await boss.stop({ graceful: false, wait: true });
  const owner = new pg.Client({
    host: base.DB_HOST,
    port: base.DB_PORT,
    user: base.DB_OWNER_USER,
    password: base.DB_OWNER_PASSWORD,
    database: DB,
  });
  await owner.connect();
  return { base, owner };
}

async function seed(owner: pg.Client) {
  const t0 = performance.now();
  const [{ id: studyId }] = (
    await owner.query(`INSERT INTO study (code, title, kind, blinding, status, target_sample_size, design)
      VALUES ('BENCH', 'Benchmark trial', 'randomized_trial', 'blinded', 'enrolling', 120000, '{}') RETURNING id`)
  ).rows as [{ id: string }];
  await owner.query(
    `INSERT INTO site (study_id, code, name, enrollment_target) SELECT $1, 'S' || lpad(g::text, 2, '0'), 'Site ' || g, 2400 FROM generate_series(1, $2) g`,
    [studyId, SITES],
  );
  await owner.query(
    `INSERT INTO arm (study_id, code, name, ratio, position) VALUES ($1, 'A', 'Arm A', 1, 0), ($1, 'B', 'Arm B', 1, 1)`,
    [studyId],
  );
  let pos = 0;
  for (let i = 0; i < CONTINUOUS; i++, pos++) {
    await owner.query(
      `INSERT INTO covariate_definition (study_id, key, label, kind, position) VALUES ($1, $2, $3, 'continuous', $4)`,
      [studyId, `c${i}`, `Continuous ${i}`, pos],
    );
  }
  for (let i = 0; i < BINARY; i++, pos++) {
    await owner.query(
      `INSERT INTO covariate_definition (study_id, key, label, kind, position) VALUES ($1, $2, $3, 'binary', $4)`,
      [studyId, `b${i}`, `Binary ${i}`, pos],
    );
  }
  for (let i = 0; i < CATEGORICAL; i++, pos++) {
    await owner.query(
      `INSERT INTO covariate_definition (study_id, key, label, kind, levels, position) VALUES ($1, $2, $3, 'categorical', $4, $5)`,
      [studyId, `k${i}`, `Categorical ${i}`, ['w', 'x', 'y', 'z'], pos],
    );
  }
  await owner.query(
    `INSERT INTO participant (study_id, site_id, code, status, enrolled_at)
     SELECT $1, (SELECT id FROM site WHERE study_id = $1 ORDER BY code OFFSET (g % $3) LIMIT 1), 'P' || g, 'enrolled', now()
       FROM generate_series(1, $2) g`,
    [studyId, PARTICIPANTS, SITES],
  );
  await owner.query(
    `INSERT INTO allocation (participant_id, study_id, arm_id, stratum_key, position, kit_code, algorithm, algorithm_version, design_version)
     SELECT p.id, $1, CASE WHEN random() < 0.5 THEN (SELECT id FROM arm WHERE study_id = $1 AND position = 0) ELSE (SELECT id FROM arm WHERE study_id = $1 AND position = 1) END,
            'all', row_number() OVER (), 'K' || p.code, 'bench', '1', 1
       FROM participant p WHERE p.study_id = $1`,
    [studyId],
  );
  await owner.query(
    `INSERT INTO baseline_value (participant_id, covariate_id, value_number, value_text, measured_on)
     SELECT p.id, c.id,
            CASE c.kind WHEN 'continuous' THEN 50 + 10 * sqrt(-2 * ln(1 - random())) * cos(2 * pi() * random())
                        WHEN 'binary' THEN (random() < 0.3)::int END,
            CASE WHEN c.kind = 'categorical' THEN (ARRAY['w', 'x', 'y', 'z'])[1 + floor(random() * 4)::int] END,
            current_date
       FROM participant p CROSS JOIN covariate_definition c
      WHERE p.study_id = $1 AND c.study_id = $1 AND random() > 0.02`,
    [studyId],
  );
  await owner.query(`ANALYZE`);
  const hash = await bcrypt.hash('bench-password-1', 4);
  const [{ id: userId }] = (
    await owner.query(
      `INSERT INTO app_user (email, display_name, password_hash, status) VALUES ('bench-stat@bench.example', 'Bench Statistician', $1, 'active') RETURNING id`,
      [hash],
    )
  ).rows as [{ id: string }];
  await owner.query(`INSERT INTO membership (user_id, study_id, role) VALUES ($1, $2, 'statistician')`, [
    userId,
    studyId,
  ]);
  const sites = (
    await owner.query(`SELECT id FROM site WHERE study_id = $1 ORDER BY code`, [studyId])
  ).rows.map((r: { id: string }) => r.id);
  const arms = (
    await owner.query(`SELECT id FROM arm WHERE study_id = $1 ORDER BY position`, [studyId])
  ).rows.map((r: { id: string }) => r.id);
  const covs = (await owner.query(`SELECT id, kind FROM covariate_definition WHERE study_id = $1`, [studyId]))
    .rows as { id: string; kind: string }[];
  console.log(
    `seeded ${PARTICIPANTS} participants x ${covs.length} covariates at ${SITES} sites in ${((performance.now() - t0) / 1000).toFixed(1)} s`,
  );
  return { studyId, sites, arms, covs };
}

type Seeded = Awaited<ReturnType<typeof seed>>;

async function openDatabase() {
  const base = loadEnv({ ...process.env, LOG_LEVEL: 'silent' });
  // A database kept from an earlier run gets the migrations added since.
  await migrate(base, DB);
  const owner = new pg.Client({
    host: base.DB_HOST,
    port: base.DB_PORT,
    user: base.DB_OWNER_USER,
    password: base.DB_OWNER_PASSWORD,
    database: DB,
  });
  await owner.connect();
  return { base, owner };
}

async function existing(owner: pg.Client): Promise<Seeded> {
  const [{ id: studyId }] = (await owner.query(`SELECT id FROM study WHERE code = 'BENCH'`)).rows as [
    { id: string },
  ];
  const sites = (
    await owner.query(`SELECT id FROM site WHERE study_id = $1 ORDER BY code`, [studyId])
  ).rows.map((r: { id: string }) => r.id);
  const arms = (
    await owner.query(`SELECT id FROM arm WHERE study_id = $1 ORDER BY position`, [studyId])
  ).rows.map((r: { id: string }) => r.id);
  const covs = (await owner.query(`SELECT id, kind FROM covariate_definition WHERE study_id = $1`, [studyId]))
    .rows as { id: string; kind: string }[];
  return { studyId, sites, arms, covs };
}

/** One enrollment as the routes write it: participant, allocation and 30 values, job enqueued in the same transaction. */
async function enrollOne(ctx: AppContext, s: Seeded): Promise<number> {
  const id = randomUUID();
  return ctx.ds
    .transaction(async (tx) => {
      const site = s.sites[Math.floor(Math.random() * s.sites.length)];
      await tx.query(
        `INSERT INTO participant (id, study_id, site_id, code, status, enrolled_at) VALUES ($1, $2, $3, $4, 'enrolled', now())`,
        [id, s.studyId, site, `N${id.slice(0, 12)}`],
      );
      await tx.query(
        `INSERT INTO allocation (participant_id, study_id, arm_id, stratum_key, position, kit_code, algorithm, algorithm_version, design_version)
       VALUES ($1, $2, $3, $4, 0, $5, 'bench', '1', 1)`,
        [id, s.studyId, s.arms[Math.floor(Math.random() * 2)], `n-${id}`, `NK${id}`],
      );
      await tx.query(
        `INSERT INTO baseline_value (participant_id, covariate_id, value_number, value_text, measured_on)
       SELECT $1, c.id, CASE c.kind WHEN 'continuous' THEN 50 + 10 * random() WHEN 'binary' THEN (random() < 0.3)::int END,
              CASE WHEN c.kind = 'categorical' THEN 'x' END, current_date
         FROM covariate_definition c WHERE c.study_id = $2`,
        [id, s.studyId],
      );
      await ctx.jobs.send(
        tx,
        'balance.recompute',
        { studyId: s.studyId, reason: 'enrollment' },
        { singletonKey: s.studyId },
      );
      return 0;
    })
    .then(() => performance.now());
}

function autocannon(
  url: string,
  cookie: string,
  connections: number,
  seconds: number,
): Promise<{
  latency: Record<string, number>;
  requests: { total: number; average: number };
  non2xx: number;
  errors: number;
}> {
  const bin = path.resolve(here, '../../../node_modules/autocannon/autocannon.js');
  return new Promise((resolve, reject) => {
    // Browsers send Accept-Encoding: gzip; so does this client.
    execFile(
      process.execPath,
      [
        bin,
        '-c',
        String(connections),
        '-d',
        String(seconds),
        '-j',
        '-H',
        `Cookie=${cookie}`,
        '-H',
        'Accept-Encoding=gzip',
        url,
      ],
      { maxBuffer: 64 * 1024 * 1024 },
      (err, stdout) => {
        if (err) reject(err);
        else resolve(JSON.parse(stdout));
      },
    );
  });
}

type WrkSummary = { requests: number; seconds: number; p50: number; p90: number; p95: number; p99: number; max: number; status: number; connect: number; read: number; write: number; timeout: number };

/** wrk from Debian's package, if installed; null otherwise. */
function wrk(url: string, cookie: string, connections: number, seconds: number): Promise<WrkSummary | null> {
  return new Promise((resolve, reject) => {
    execFile(
      'wrk',
      ['-t1', `-c${connections}`, `-d${seconds}s`, '--timeout', '5s', '-s', path.join(here, 'wrk-summary.lua'), '-H', `Cookie: ${cookie}`, '-H', 'Accept-Encoding: gzip', url],
      { maxBuffer: 1024 * 1024 },
      (err, stdout) => {
        if (err && (err as NodeJS.ErrnoException).code === 'ENOENT') return resolve(null);
        if (err) return reject(err);
        const line = stdout.split('\n').find((l) => l.startsWith('{'));
        resolve(line ? (JSON.parse(line) as WrkSummary) : null);
      },
    );
  });
}

export async function run(): Promise<void> {
  console.log(`node ${process.version}, ${os.cpus().length} cores, ${os.cpus()[0]?.model ?? ''}`);
  const { base, owner } = reuse ? await openDatabase() : await setupDatabase();
  const s = reuse ? await existing(owner) : await seed(owner);
  const outboxDir = fs.mkdtempSync(path.join(os.tmpdir(), 'cp-bench-outbox-'));
  const smtp = await startFakeSmtp({ port: 0, outboxDir });
  const env = { ...base, DB_NAME: DB, SMTP_PORT: smtp.port, LOG_LEVEL: 'silent' as const };
  const ds = createDataSource(env);
  await ds.initialize();
  const jobs = await createJobQueue(env, DB);
  const ctx: AppContext = { env, ds, mailer: createMailer(env), jobs };
  const figures: Record<string, string> = {};

  let t = performance.now();
  if (part('full')) {
    // 1. Full recompute. The first run also consumes the import's change log (one row per value).
    await recomputeBalance(ctx, { studyId: s.studyId, reason: 'import', full: true });
    figures['first full recompute (also consumes the 3M-row import change log)'] = ms(performance.now() - t);
    // What autovacuum does within a minute of the import being consumed (see the balance_change
    // autovacuum migration); without it every run would step over 3M dead index entries.
    await owner.query(`VACUUM ANALYZE balance_change`);
    const fulls: number[] = [];
    let stages = '';
    for (let i = 0; i < (quick ? 2 : 5); i++) {
      t = performance.now();
      const r = await recomputeBalance(ctx, { studyId: s.studyId, reason: 'manual', full: true });
      fulls.push(performance.now() - t);
      stages = JSON.stringify(r?.timings);
    }
    figures['full recompute, stages of the last run (ms)'] = stages;
    figures['full recompute (moments, SMDs, bands, flags, alerts, snapshot), median of runs'] =
      `${ms(pct(fulls, 50))} (runs: ${fulls.map((x) => x.toFixed(0)).join(', ')} ms)`;
    t = performance.now();
    await recomputeBalance(ctx, { studyId: s.studyId, reason: 'quantiles', quantiles: true });
    figures['quantile run queued by a full rebuild (exact medians and quartiles from all rows)'] = ms(
      performance.now() - t,
    );
  }
  if (part('incremental')) {
    // 2. Incremental recompute after one enrollment.
    // Each run is timed to its committed snapshot (what the dashboard sees), and separately with
    // the alert e-mail it may send afterwards (an SMTP delivery when an alert opens).
    const incs: number[] = [];
    const withMail: number[] = [];
    let cold = NaN;
    for (let i = 0; i < (quick ? 5 : 30); i++) {
      await enrollOne(ctx, s);
      t = performance.now();
      const r = await recomputeBalance(ctx, { studyId: s.studyId, reason: 'enrollment' });
      withMail.push(performance.now() - t);
      if (r?.kind !== 'incremental') throw new Error(`expected an incremental run, got ${r?.kind}`);
      // The first run of a process reads the accumulators from the database; later ones reuse its copy.
      if (i === 0) cold = r.timings.committed ?? NaN;
      else incs.push(r.timings.committed ?? NaN);
    }
    figures['incremental recompute after one enrollment, to the committed snapshot'] =
      `p50 ${ms(pct(incs, 50))}, p95 ${ms(pct(incs, 95))}, max ${ms(Math.max(...incs))} (${incs.length} runs); ` +
      `first incremental run in this process ${ms(cold)} (it reads the accumulators from the database unless an earlier run here left them)`;
    figures['same, including the alert e-mail sent after the commit'] =
      `p50 ${ms(pct(withMail, 50))}, p95 ${ms(pct(withMail, 95))}, max ${ms(Math.max(...withMail))}`;
  }
  // Drain the queue the enrollments filled, so the HTTP figures are not "pending" checks of a busy queue.
  await ds.query(`DELETE FROM pgboss.job WHERE name = 'balance.recompute'`);

  if (part('get')) {
    // 3. GET /balance under 50 concurrent clients, against the API as the start script runs it
    // (its own process, heap limit, production settings), with one API process and with one per core.
    for (const processes of [1, os.cpus().length]) {
      const port = 5598;
      const server = await startApi(port, { DB_NAME: DB, SMTP_PORT: String(env.SMTP_PORT), API_PROCESSES: String(processes) });
      try {
        const signIn = await fetch(`http://127.0.0.1:${port}/api/auth/sign-in`, {
          method: 'POST',
          headers: { 'content-type': 'application/json' },
          body: JSON.stringify({ email: 'bench-stat@bench.example', password: 'bench-password-1' }),
        });
        const cookie = (signIn.headers.getSetCookie?.() ?? []).map((c) => c.split(';')[0]).join('; ');
        const url = `http://127.0.0.1:${port}/api/studies/${s.studyId}/balance`;
        const probe = await fetch(url, { headers: { cookie } });
        const probeBody = await probe.text();
        const gz = await new Promise<number>((resolve) => {
          http.get({ host: '127.0.0.1', port, path: new URL(url).pathname, headers: { cookie, 'accept-encoding': 'gzip' } }, (r) => {
            let n = 0;
            r.on('data', (d: Buffer) => (n += d.length));
            r.on('end', () => resolve(n));
          });
        });
        figures['GET /balance response size'] =
          `${(probeBody.length / 1024).toFixed(0)} KiB, ${(gz / 1024).toFixed(0)} KiB gzipped (status ${probe.status})`;
        // Warm-up, then the measured run.
        await autocannon(url, cookie, 50, 2);
        const load = await autocannon(url, cookie, 50, quick ? 5 : 10);
        const label = `${processes} API process${processes > 1 ? 'es' : ''}`;
        figures[`GET /balance, 50 connections (autocannon), ${label}`] =
          `p50 ${load.latency.p50} ms, p90 ${load.latency.p90} ms, p97.5 ${load.latency.p97_5} ms, p99 ${load.latency.p99} ms, ` +
          `${load.requests.average} req/s, ${load.requests.total} requests, non-2xx ${load.non2xx}, errors ${load.errors}`;
        // The same load from wrk (C, one thread), which needs a fraction of autocannon's CPU: on two
        // shared cores the client's own work is otherwise a large part of what is measured.
        const w = await wrk(url, cookie, 50, quick ? 5 : 10);
        if (w) {
          figures[`GET /balance, 50 connections (wrk), ${label}`] =
            `p50 ${w.p50.toFixed(1)} ms, p90 ${w.p90.toFixed(1)} ms, p95 ${w.p95.toFixed(1)} ms, p99 ${w.p99.toFixed(1)} ms, ` +
            `${Math.round(w.requests / w.seconds)} req/s, ${w.requests} requests, non-2xx ${w.status}, ` +
            `socket errors ${w.connect + w.read + w.write + w.timeout}`;
        } else figures[`GET /balance (wrk), ${label}`] = 'not run: wrk is not installed (apt-get install wrk)';
      } finally {
        await stopApi(server);
      }
    }
  }

  if (part('stream')) {
    // 4. Commit-to-snapshot latency with a real pg-boss worker while 20 clients enroll.
    const boss = new PgBoss(bossOptions(env, DB));
    boss.on('error', () => undefined);
    await boss.start();
    const runs: { start: number; done: number }[] = [];
    await boss.work('balance.recompute', { batchSize: 1, pollingIntervalSeconds: 0.5 }, async (batch) => {
      const start = performance.now();
      await balanceRecomputeHandler.handle(ctx, batch as PgBoss.Job<object>[], pino({ level: 'silent' }));
      runs.push({ start, done: performance.now() });
    });
    const commits: number[] = [];
    const until = performance.now() + (quick ? 5_000 : 15_000);
    await Promise.all(
      Array.from({ length: 20 }, async () => {
        while (performance.now() < until) {
          commits.push(await enrollOne(ctx, s));
          await new Promise((r) => setTimeout(r, 150 + Math.random() * 100));
        }
      }),
    );
    // Let the last changes land.
    const waitUntil = performance.now() + 10_000;
    while (performance.now() < waitUntil) {
      const [{ n }] = (await ds.query(`SELECT count(*)::int AS n FROM balance_change`)) as [{ n: number }];
      const [{ busy }] = (await ds.query(
        `SELECT count(*)::int AS busy FROM pgboss.job WHERE name = 'balance.recompute' AND state IN ('created', 'retry', 'active')`,
      )) as [{ busy: number }];
      if (n === 0 && busy === 0) break;
      await new Promise((r) => setTimeout(r, 200));
    }
    await boss.stop({ graceful: true, wait: true, timeout: 10_000 });
    // Conservative: a commit counts as shown by the first run that started after it.
    const latencies = commits.flatMap((c) => {
      const r = runs.find((x) => x.start >= c);
      return r ? [r.done - c] : [];
    });
    figures['commit -> snapshot, 20 clients enrolling'] =
      `p50 ${ms(pct(latencies, 50))}, p95 ${ms(pct(latencies, 95))}, max ${ms(Math.max(...latencies))}; ` +
      `${commits.length} enrollments (${(commits.length / (quick ? 5 : 15)).toFixed(0)}/s), ${runs.length} recompute runs, ${commits.length - latencies.length} not matched`;
  }

  console.log('\nBalance benchmark');
  for (const [k, v] of Object.entries(figures)) console.log(`  ${k}: ${v}`);
  const out = args.indexOf('--out');
  if (out >= 0) {
    const record = { at: new Date().toISOString(), participants: PARTICIPANTS, figures };
    fs.writeFileSync(String(args[out + 1]), JSON.stringify(record, null, 2));
  }

  await jobs.stop();
  await ds.destroy();
  await smtp.close();
  await owner.end();
}

if (import.meta.url === `file://${process.argv[1]}`) {
  await run();
  process.exit(0);
}
