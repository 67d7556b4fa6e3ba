/**
 * Enrollment and import benchmark (figures only; nothing here asserts on time).
 *
 *   cd apps/api && node --import tsx bench/enrollment.bench.ts [--seconds 20] [--rows 50000]
 *
 * Builds a throwaway database `cp_bench_enroll`, starts the real API (src/server.ts) as a
 * child process on loopback, signs a coordinator in, then measures:
 *  1. POST /api/studies/:id/participants (validation, eligibility, stratified permuted-block
 *     allocation under the stratum lock, audit entries, balance job) with 20 concurrent
 *     autocannon clients, every request through the session and CSRF checks;
 *  2. POST /api/studies/:id/participants/import?mode=commit of a 50,000-row CSV with 20
 *     covariates, on a freshly started API process, with that process's peak RSS sampled.
 */
import 'reflect-metadata';
import fs from 'node:fs';
import http from 'node:http';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
// @ts-expect-error autocannon ships no type declarations
import autocannon from 'autocannon';
import bcrypt from 'bcryptjs';
import pg from 'pg';
import PgBoss from 'pg-boss';
import { designBodySchema, type DesignBodyInput } from '@counterpoise/contracts/design';
import { addDays, utcToday } from '@counterpoise/contracts/participants';
import { createRng } from '@counterpoise/stats';
import { loadEnv } from '../src/config/env.js';
import { startApi, stopApi } from './api-process.js';
import { createDataSource, migrate } from '../src/db/data-source.js';
import { bossOptions, createJobQueue, ensureQueues } from '../src/jobs/queue.js';
import { saveDesign } from '../src/modules/design/design.service.js';
import type { AppContext } from '../src/app-context.js';

const DB = 'cp_bench_enroll';
const PORT = 5597;
const args = process.argv.slice(2);
const arg = (name: string, fallback: number) => {
  const i = args.indexOf(`--${name}`);
  return i >= 0 ? Number(args[i + 1]) : fallback;
};
const SECONDS = arg('seconds', 20);
const ROWS = arg('rows', 50_000);
const here = path.dirname(fileURLToPath(import.meta.url));
const base = loadEnv({ ...process.env, LOG_LEVEL: 'silent' });
const pct = (xs: number[], p: number) => {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.ceil((p / 100) * s.length) - 1)] ?? NaN;
};
const SITES = Array.from({ length: 10 }, (_, i) => `S${String(i + 1).padStart(2, '0')}`);

async function setupDatabase() {
  const admin = new pg.Client({ host: base.DB_HOST, port: base.DB_PORT, user: base.DB_OWNER_USER, password: base.DB_OWNER_PASSWORD, database: base.DB_NAME });
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
  const owner = new pg.Client({ host: base.DB_HOST, port: base.DB_PORT, user: base.DB_OWNER_USER, password: base.DB_OWNER_PASSWORD, database: DB });
  await owner.connect();
  return owner;
}

function covariates(n: number): DesignBodyInput['covariates'] {
  const out: DesignBodyInput['covariates'] = [
    { key: 'age', label: 'Age', kind: 'continuous', unit: 'years', min: 18, max: 100, decimals: 0 },
    { key: 'sex', label: 'Sex', kind: 'categorical', levels: ['female', 'male'], isStratification: true },
  ];
  for (let i = 0; out.length < n; i++) {
    if (i % 7 === 5) out.push({ key: `b${i}`, label: `Binary ${i}`, kind: 'binary' });
    else if (i % 7 === 6) out.push({ key: `c${i}`, label: `Category ${i}`, kind: 'categorical', levels: ['low', 'mid', 'high'] });
    else out.push({ key: `x${i}`, label: `Measure ${i}`, kind: 'continuous', unit: 'u', min: 0, max: 1000, decimals: 1 });
  }
  return out;
}

async function createBenchStudy(owner: pg.Client, code: string, ncov: number, target: number) {
  const { rows } = await owner.query(
    `INSERT INTO study (code, title, kind, blinding, status, target_sample_size) VALUES ($1, $2, 'randomized_trial', 'blinded', 'setup', $3) RETURNING id`,
    [code, `Benchmark ${code}`, target],
  );
  const studyId = (rows[0] as { id: string }).id;
  const ds = createDataSource({ ...base, DB_NAME: DB });
  await ds.initialize();
  const jobs = await createJobQueue(base, DB);
  const design: DesignBodyInput = {
    targetSampleSize: target,
    arms: [
      { code: 'A', name: 'Arm A', ratio: 1 },
      { code: 'B', name: 'Arm B', ratio: 1 },
    ],
    sites: SITES.map((s) => ({ code: s, name: `Site ${s}`, enrollmentTarget: Math.ceil(target / SITES.length) })),
    covariates: covariates(ncov),
    eligibility: [{ id: 'adult', kind: 'inclusion', label: 'Aged 18 or over', field: 'age', op: '>=', value: 18 }],
    allocation: { method: 'permuted_blocks', blockSizes: [4, 6], stratifyBySite: true },
  };
  await saveDesign({ ds, jobs } as unknown as AppContext, { userId: null, email: 'bench@local', role: 'system', requestId: 'bench' }, studyId, designBodySchema.parse(design));
  await jobs.stop();
  await ds.destroy();
  const site: { rows: { id: string; code: string }[] } = await owner.query(`SELECT id, code FROM site WHERE study_id = $1 ORDER BY code`, [studyId]);
  return { studyId, sites: site.rows, covariates: covariates(ncov) };
}

const startServer = () =>
  startApi(PORT, { NODE_OPTIONS: process.env.BENCH_NODE_OPTIONS ?? '', DB_NAME: DB, DB_POOL_SIZE: '20' });
const stopServer = stopApi;

async function signIn(email: string) {
  const res = await fetch(`http://127.0.0.1:${PORT}/api/auth/sign-in`, {
    method: 'POST',
    headers: { 'content-type': 'application/json' },
    body: JSON.stringify({ email, password: 'bench-password-1' }),
  });
  if (!res.ok) throw new Error(`sign-in failed: ${res.status} ${await res.text()}`);
  const cookie = res.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ');
  const body = (await res.json()) as { me: { csrfToken: string } };
  return { cookie, csrf: body.me.csrfToken };
}

function rssPeakKb(pid: number): number {
  const status = fs.readFileSync(`/proc/${pid}/status`, 'utf8');
  return Number(/VmHWM:\s+(\d+)/.exec(status)?.[1] ?? 0);
}

/** Sends `rate` POSTs per second, evenly spaced, over at most `connections` keep-alive connections. */
async function pacedRun(
  url: string,
  headers: Record<string, string>,
  bodyFor: () => string,
  opts: { rate: number; seconds: number; connections: number },
): Promise<{ latencies: number[]; completed: number; seconds: number; non2xx: number; errors: number }> {
  const agent = new http.Agent({ keepAlive: true, maxSockets: opts.connections });
  const target = new URL(url);
  const latencies: number[] = [];
  let non2xx = 0;
  let errors = 0;
  const send = (body: string, due: number) =>
    new Promise<void>((resolve) => {
      const req = http.request(
        { agent, host: target.hostname, port: target.port, path: target.pathname, method: 'POST', headers: { ...headers, 'content-length': Buffer.byteLength(body) } },
        (res) => {
          res.resume();
          res.on('end', () => {
            latencies.push(performance.now() - due);
            if ((res.statusCode ?? 0) >= 300) non2xx += 1;
            resolve();
          });
        },
      );
      req.on('error', () => {
        errors += 1;
        resolve();
      });
      req.end(body);
    });
  const total = opts.rate * opts.seconds;
  const t0 = performance.now() + 20;
  const inflight: Promise<void>[] = [];
  for (let i = 0; i < total; i++) {
    const due = t0 + (i * 1000) / opts.rate;
    const wait = due - performance.now();
    if (wait > 0) await new Promise((r) => setTimeout(r, wait));
    inflight.push(send(bodyFor(), due));
  }
  await Promise.all(inflight);
  const seconds = (performance.now() - t0) / 1000;
  agent.destroy();
  return { latencies, completed: latencies.length, seconds, non2xx, errors };
}

async function main() {
  const owner = await setupDatabase();
  const hash = await bcrypt.hash('bench-password-1', 4);
  const enrollStudy = await createBenchStudy(owner, 'BENCH', 6, 1_000_000);
  const importStudy = await createBenchStudy(owner, 'BENCHIMP', 20, 1_000_000);
  const { rows: users } = await owner.query(`INSERT INTO app_user (email, display_name, password_hash, status) VALUES ('coord@bench.local', 'Bench Coordinator', $1, 'active') RETURNING id`, [hash]);
  const userId = (users[0] as { id: string }).id;
  for (const s of [enrollStudy, importStudy]) {
    await owner.query(`INSERT INTO membership (user_id, study_id, role, site_ids) VALUES ($1, $2, 'coordinator', $3::uuid[])`, [userId, s.studyId, s.sites.map((x) => x.id)]);
  }

  // 1. Enrollment under load.
  let server = await startServer();
  const auth = await signIn('coord@bench.local');
  const today = utcToday();
  const on = addDays(today, -2);
  const rng = createRng('bench-enroll');
  const bodyFor = () =>
    JSON.stringify({
      siteId: enrollStudy.sites[rng.int(enrollStudy.sites.length)]!.id,
      consent: { date: addDays(today, -1), version: '1.0' },
      baseline: Object.fromEntries(
        enrollStudy.covariates.map((c) => [
          c.key,
          {
            value: c.kind === 'binary' ? rng.next() < 0.5 : c.kind === 'categorical' ? (c.key === 'sex' ? (rng.next() < 0.5 ? 'female' : 'male') : 'mid') : c.key === 'age' ? 30 + rng.int(50) : Math.round(rng.next() * 9000) / 10,
            measuredOn: on,
          },
        ]),
      ),
    });
  const url = `http://127.0.0.1:${PORT}/api/studies/${enrollStudy.studyId}/participants`;
  const headers = { cookie: auth.cookie, 'x-csrf-token': auth.csrf, 'content-type': 'application/json' };
  // Warm-up: JIT, pools, caches.
  await autocannon({ url, method: 'POST', connections: 10, amount: 300, headers, requests: [{ setupRequest: (r: object) => ({ ...r, body: bodyFor() }) }] });
  const serial: number[] = [];
  for (let i = 0; i < 100; i++) {
    const t = performance.now();
    const r = await fetch(url, { method: 'POST', headers, body: bodyFor() });
    await r.arrayBuffer();
    serial.push(performance.now() - t);
  }
  console.log('one client, 100 sequential enrollments: p50', pct(serial, 50).toFixed(1), 'ms, p95', pct(serial, 95).toFixed(1), 'ms');
  const latencies: number[] = [];
  const result = await autocannon({
    url,
    method: 'POST',
    connections: 20,
    duration: SECONDS,
    headers,
    requests: [{ setupRequest: (r: object) => ({ ...r, body: bodyFor() }) }],
    setupClient: (client: { on: (e: 'response', f: (status: number, bytes: number, time: number) => void) => void }) => {
      client.on('response', (_s, _b, time) => latencies.push(time));
    },
  });
  // The same 20 connections paced to 200 enrollments per second in all, one request every 5 ms:
  // latency at the target rate rather than at saturation (where, with 20 clients always waiting,
  // mean latency is 20 / throughput by Little's law). autocannon's own rate limit sends each
  // connection's share of a second back to back at the start of that second, which is a burst at
  // full speed, so the pacing here is our own. Latency counts from each request's scheduled time,
  // so a request that waited for a free connection counts its wait.
  const pacedResult = await pacedRun(url, headers, bodyFor, { rate: 200, seconds: SECONDS, connections: 20 });
  const paced = pacedResult.latencies;
  const pacedFigures = {
    offeredPerSecond: 200,
    perSecond: Math.round((pacedResult.completed / pacedResult.seconds) * 10) / 10,
    non2xx: pacedResult.non2xx,
    errors: pacedResult.errors,
    latencyMs: { p50: pct(paced, 50), p95: pct(paced, 95), p99: pct(paced, 99) },
  };
  console.log('enrollment paced', JSON.stringify(pacedFigures));
  const enrolled = (await owner.query(`SELECT count(*)::int AS n FROM allocation WHERE study_id = $1`, [enrollStudy.studyId])).rows[0] as { n: number };
  const enrollFigures = {
    connections: 20,
    seconds: SECONDS,
    requests: result.requests.total,
    non2xx: result.non2xx,
    errors: result.errors,
    perSecond: Math.round((result.requests.total / result.duration) * 10) / 10,
    latencyMs: { p50: pct(latencies, 50), p95: pct(latencies, 95), p99: pct(latencies, 99), max: Math.max(...latencies) },
    allocationsInDb: enrolled.n,
    paced: pacedFigures,
  };
  console.log('enrollment', JSON.stringify(enrollFigures));
  await stopServer(server);

  // 2. Import of ROWS x 20 covariates on a fresh API process.
  const csvPath = path.join(os.tmpdir(), `cp-bench-import-${process.pid}.csv`);
  const out = fs.createWriteStream(csvPath);
  const cov = importStudy.covariates;
  out.write(['participant_ref', 'site', 'enrollment_date', 'consent_date', 'consent_version', ...cov.flatMap((c) => [c.key, `${c.key}_date`])].join(',') + '\n');
  const r2 = createRng('bench-import');
  for (let i = 0; i < ROWS; i++) {
    const cells = [`P${i}`, SITES[r2.int(SITES.length)]!, addDays(today, -1), addDays(today, -2), '1.0'];
    for (const c of cov) {
      const v = c.kind === 'binary' ? (r2.next() < 0.5 ? 'yes' : 'no') : c.kind === 'categorical' ? (c.key === 'sex' ? (r2.next() < 0.5 ? 'female' : 'male') : 'low') : c.key === 'age' ? String(20 + r2.int(70)) : (Math.round(r2.next() * 9000) / 10).toFixed(1);
      cells.push(v, on);
    }
    if (!out.write(cells.join(',') + '\n')) await new Promise<void>((r) => out.once('drain', () => r()));
  }
  await new Promise<void>((r) => out.end(() => r()));
  const sizeMb = fs.statSync(csvPath).size / 1024 / 1024;
  server = await startServer();
  const auth2 = await signIn('coord@bench.local');
  const rssBeforeKb = rssPeakKb(server.pid!);
  const upload = async (mode: 'preview' | 'commit') => {
    const form = new FormData();
    form.append('file', await fs.openAsBlob(csvPath, { type: 'text/csv' }), 'bench.csv');
    return fetch(`http://127.0.0.1:${PORT}/api/studies/${importStudy.studyId}/participants/import?mode=${mode}`, {
      method: 'POST',
      headers: { cookie: auth2.cookie, 'x-csrf-token': auth2.csrf },
      body: form,
    });
  };
  // The preview (validation only, nothing written) first: how much of the commit is the checking.
  const tp = performance.now();
  await (await upload('preview')).arrayBuffer();
  const previewSeconds = (performance.now() - tp) / 1000;
  const t0 = performance.now();
  const res = await upload('commit');
  const body = (await res.json()) as { report?: { imported: number; rowCount: number }; error?: unknown };
  const seconds = (performance.now() - t0) / 1000;
  const peakKb = rssPeakKb(server.pid!);
  const counts = (await owner.query(
    `SELECT (SELECT count(*)::int FROM participant WHERE study_id = $1) AS participants,
            (SELECT count(*)::int FROM baseline_value bv JOIN participant p ON p.id = bv.participant_id WHERE p.study_id = $1) AS values,
            (SELECT count(*)::int FROM allocation WHERE study_id = $1) AS allocations`,
    [importStudy.studyId],
  )).rows[0];
  const importFigures = {
    rows: ROWS,
    covariates: cov.length,
    fileMb: Math.round(sizeMb * 10) / 10,
    status: res.status,
    imported: body.report?.imported ?? null,
    seconds: Math.round(seconds * 100) / 100,
    previewSeconds: Math.round(previewSeconds * 100) / 100,
    serverRssMb: { beforeImport: Math.round(rssBeforeKb / 1024), peak: Math.round(peakKb / 1024) },
    database: counts,
    ...(body.error ? { error: body.error } : {}),
  };
  console.log('import', JSON.stringify(importFigures));
  await stopServer(server);
  if (!args.includes('--keep-csv')) fs.rmSync(csvPath, { force: true });
  else console.log('csv kept at', csvPath);
  await owner.end();
  const figures = { at: new Date().toISOString(), machine: `${os.cpus().length} cores, ${os.cpus()[0]?.model ?? ''}`, node: process.version, enrollment: enrollFigures, import: importFigures };
  fs.writeFileSync(path.join(here, 'enrollment.bench.last.json'), JSON.stringify(figures, null, 2));
  console.log(JSON.stringify(figures, null, 2));
}

await main();
