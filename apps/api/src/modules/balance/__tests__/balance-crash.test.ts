import { spawn } from 'node:child_process';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { standardizedMeanDifference } from '@counterpoise/stats';
import type { BalanceArmsView } from '@counterpoise/contracts/balance';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, createUser, type TestContext } from '../../../test/harness.js';
import { createBalanceStudy, enroll, readCounted, runJob, type BalanceStudy, type Enrollee } from './balance-fixtures.js';

/*
 * A real worker process runs the recompute and is killed with SIGKILL at a chosen point (inside
 * the transaction, or after commit but before the e-mails); then the job runs again, as pg-boss
 * would retry it after the lease expires.
 */
const here = path.dirname(fileURLToPath(import.meta.url));
const age = (i: number) => 50 + ((i * 7) % 20) * 1.5;
const pair = (site: number, i: number, shift: number): Enrollee[] => [
  { site, arm: 0, values: { age: age(i) } },
  { site, arm: 1, values: { age: age(i) + shift } },
];

async function runChildAndKill(t: TestContext, studyId: string, pauseAt: string): Promise<string> {
  const child = spawn(process.execPath, ['--import', 'tsx', path.join(here, 'recompute-child.ts')], {
    cwd: path.resolve(here, '../../../..'),
    env: { ...process.env, NODE_ENV: 'test', LOG_LEVEL: 'silent', DB_NAME: t.database, SMTP_PORT: String(t.smtp.port), BALANCE_STUDY_ID: studyId, BALANCE_PAUSE_AT: pauseAt },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let out = '';
  let err = '';
  child.stderr.on('data', (d: Buffer) => (err += d.toString()));
  await new Promise<void>((resolve, reject) => {
    child.stdout.on('data', (d: Buffer) => {
      out += d.toString();
      if (out.includes('PAUSED')) resolve();
    });
    child.on('exit', (code) => reject(new Error(`child exited (${code}) before pausing: ${out} ${err}`)));
  });
  const exited = new Promise<NodeJS.Signals | null>((resolve) => child.on('exit', (_code, signal) => resolve(signal)));
  child.kill('SIGKILL');
  return (await exited) ?? 'none';
}

describe('killing the worker mid-recompute', () => {
  let t: TestContext;
  let study: BalanceStudy;
  let stats: string[];

  beforeAll(async () => {
    t = await createTestContext();
    study = await createBalanceStudy(t, {
      sites: ['S1', 'S2', 'S3'],
      covariates: [{ key: 'age', kind: 'continuous' }],
      // Threshold alerts at sites too (by default sites alert only beyond their chance band).
      design: { alertRules: { siteRules: ['smd_threshold', 'smd_beyond_chance'] } },
    });
    stats = [
      (await createUser(t, { memberships: [{ studyId: study.id, role: 'statistician' }] })).email,
      (await createUser(t, { memberships: [{ studyId: study.id, role: 'statistician' }] })).email,
    ];
    const people: Enrollee[] = [];
    for (const site of [0, 2]) for (let i = 0; i < 100; i++) people.push(...pair(site, i, 0));
    await enroll(t, study, people);
    await runJob(t, { studyId: study.id, reason: 'import' });
  });
  afterAll(async () => {
    await t.close();
  });

  async function checkSnapshot(): Promise<void> {
    const [snap] = await t.ownerQuery<{ result: BalanceArmsView }>(
      `SELECT result FROM balance_snapshot WHERE study_id = $1 ORDER BY computed_at DESC LIMIT 1`,
      [study.id],
    );
    const stored = await readCounted(t, study);
    const x = (arm: number) => stored.filter((s) => s.armId === study.armIds[arm]).map((s) => s.values.get('age')!.n as number);
    expect(snap!.result.snapshot.enrolledCount).toBe(stored.length);
    expect(snap!.result.covariates[0]!.balance.comparisons[0]!.smd).toBeCloseTo(standardizedMeanDifference(x(1), x(0), { kind: 'continuous' }), 10);
  }

  it('when the worker process is SIGKILLed inside the recompute transaction and the job runs again, then the snapshot is correct, the alerts exist once and each statistician gets one e-mail', async () => {
    const drift: Enrollee[] = [];
    for (let i = 0; i < 20; i++) drift.push(...pair(1, i, 12));
    await enroll(t, study, drift);
    const snapshotsBefore = (await t.ownerQuery<{ n: number }>(`SELECT count(*)::int AS n FROM balance_snapshot`))[0]!.n;
    expect(await runChildAndKill(t, study.id, 'afterSnapshotWrite')).toBe('SIGKILL');

    // Nothing of the killed run survived; its input is still in the change log.
    const counts = await t.ownerQuery<{ snaps: number; alerts: number; logged: number; mails: number }>(
      `SELECT (SELECT count(*)::int FROM balance_snapshot) AS snaps, (SELECT count(*)::int FROM alert) AS alerts,
              (SELECT count(*)::int FROM balance_change WHERE study_id = $1) AS logged,
              (SELECT count(*)::int FROM alert_notification) AS mails`,
      [study.id],
    );
    expect(counts[0]).toMatchObject({ snaps: snapshotsBefore, alerts: 0, mails: 0 });
    expect(counts[0]!.logged).toBeGreaterThan(0);

    await runJob(t, { studyId: study.id, reason: 'enrollment' });
    await checkSnapshot();
    const alerts = await t.ownerQuery<{ k: string; site_id: string | null; rule: string }>(
      `SELECT rule || '|' || COALESCE(site_id::text, 'overall') AS k, site_id, rule FROM alert WHERE study_id = $1 ORDER BY rule`,
      [study.id],
    );
    expect(new Set(alerts.map((a) => a.k)).size).toBe(alerts.length);
    expect(alerts.filter((a) => a.site_id === study.siteIds[1]).map((a) => a.rule)).toEqual(['smd_beyond_chance', 'smd_threshold']);
    const mails = await t.smtp.list();
    expect(mails.flatMap((m) => m.to).sort()).toEqual([...stats].sort());
  });

  it('when the worker process is SIGKILLed after commit but before e-mailing, then the rerun sends the pending e-mails once and opens no duplicate alert', async () => {
    const mailsBefore = (await t.smtp.list()).length;
    // Drift at S3 this time (S3 had identical pairs so far).
    const drift: Enrollee[] = [];
    for (let i = 0; i < 40; i++) drift.push(...pair(2, i, 30));
    await enroll(t, study, drift);
    expect(await runChildAndKill(t, study.id, 'beforeMail')).toBe('SIGKILL');
    const pending = await t.ownerQuery<{ n: number }>(`SELECT count(*)::int AS n FROM alert_notification WHERE sent_at IS NULL`);
    expect(pending[0]!.n).toBeGreaterThan(0);
    expect((await t.smtp.list()).length).toBe(mailsBefore);
    const alertsAfterKill = (await t.ownerQuery<{ n: number }>(`SELECT count(*)::int AS n FROM alert`))[0]!.n;

    await runJob(t, { studyId: study.id, reason: 'enrollment' });
    await runJob(t, { studyId: study.id, reason: 'enrollment' });
    await checkSnapshot();
    expect((await t.ownerQuery<{ n: number }>(`SELECT count(*)::int AS n FROM alert`))[0]!.n).toBe(alertsAfterKill);
    const mails = await t.smtp.list();
    expect(mails.slice(mailsBefore).flatMap((m) => m.to).sort()).toEqual([...stats].sort());
    expect((await t.ownerQuery<{ n: number }>(`SELECT count(*)::int AS n FROM alert_notification WHERE sent_at IS NULL`))[0]!.n).toBe(0);
  });
});
