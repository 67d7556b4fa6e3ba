import { balanceArmsViewSchema, balanceHistorySchema, balancePooledViewSchema, baselineTableSchema } from '@counterpoise/contracts/balance';
import { oneWayAnova } from '@counterpoise/stats';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditCount, createTestContext, createUser, signIn, type SignedInAgent, type TestContext } from '../../../test/harness.js';
import { createBalanceStudy, enroll, normal, readCounted, rng, runJob, type BalanceStudy, type Enrollee } from './balance-fixtures.js';

const COVS = [
  { key: 'age', kind: 'continuous' as const },
  { key: 'smoker', kind: 'binary' as const },
  { key: 'region', kind: 'categorical' as const, levels: ['north', 'south', 'east'] },
];

/** Every arm id of the study must be absent from a blinded response, anywhere in it. */
function expectNoArm(study: BalanceStudy, payload: unknown): void {
  const text = JSON.stringify(payload);
  for (const arm of study.armIds) expect(text).not.toContain(arm);
  expect(text).not.toMatch(/"armId"|"byArm"|"comparisons"|"smd"/);
}

describe('balance routes', () => {
  let t: TestContext;
  let study: BalanceStudy;
  let statistician: SignedInAgent;
  let sponsor: SignedInAgent;
  let coordinator: SignedInAgent;
  let auditor: SignedInAgent;

  beforeAll(async () => {
    t = await createTestContext();
    study = await createBalanceStudy(t, { sites: ['S1', 'S2'], covariates: COVS });
    const r = rng(5);
    const people: Enrollee[] = Array.from({ length: 80 }, (_, i) => ({
      site: i % 2,
      arm: Math.floor(r() * 2),
      values: { age: normal(r, 60, 8), smoker: r() < 0.3 ? 1 : 0, region: ['north', 'south', 'east'][i % 3]! },
    }));
    await enroll(t, study, people);
    const mk = async (role: 'statistician' | 'sponsor' | 'coordinator' | 'auditor') =>
      signIn(t, (await createUser(t, { memberships: [{ studyId: study.id, role, siteIds: role === 'coordinator' ? [study.siteIds[0]!] : [] }] })).email);
    statistician = await mk('statistician');
    sponsor = await mk('sponsor');
    coordinator = await mk('coordinator');
    auditor = await mk('auditor');
  });
  afterAll(async () => {
    await t.close();
  });

  it('when no snapshot exists yet, then GET /balance answers 404 and says whether a recompute is pending', async () => {
    const res = await statistician.get(`/api/studies/${study.id}/balance`);
    expect(res.status).toBe(404);
    expect(res.body.error.details.freshness.recomputePending).toBe(false);
  });

  it('when the statistician asks, then the arm-level snapshot is served with its freshness, overall and for one site', async () => {
    await runJob(t, { studyId: study.id, reason: 'import' });
    const res = await statistician.get(`/api/studies/${study.id}/balance`);
    expect(res.status).toBe(200);
    const view = balanceArmsViewSchema.parse(res.body);
    expect(view.freshness.computedAt).toBe(view.snapshot.computedAt);
    expect(view.freshness.recomputePending).toBe(false);
    expect(view.snapshot.enrolledCount).toBe(80);
    expect(view.siteGrid).toHaveLength(2);
    expect(view.cautions.join(' ')).toMatch(/does not justify adding a covariate/);
    // Compressed once per snapshot for clients that accept it (supertest asks for gzip, as browsers do).
    expect(res.headers['content-encoding']).toBe('gzip');
    // A poller that already has this snapshot gets a 304 and no body.
    const etag = res.headers.etag as string;
    expect(etag).toContain(view.snapshot.id);
    const again = await statistician.get(`/api/studies/${study.id}/balance`).set('If-None-Match', etag);
    expect(again.status).toBe(304);
    const site = await statistician.get(`/api/studies/${study.id}/balance?site=${study.siteIds[1]}`);
    const siteView = balanceArmsViewSchema.parse(site.body);
    expect(siteView.scope.siteId).toBe(study.siteIds[1]);
    expect(siteView.site!.enrolled).toBe(40);
    expect((await statistician.get(`/api/studies/${study.id}/balance?site=${study.armIds[0]}`)).status).toBe(404);
  });

  it('when a sponsor asks for balance, then the view is pooled and carries no arm; arm-level is refused', async () => {
    const res = await sponsor.get(`/api/studies/${study.id}/balance`);
    expect(res.status).toBe(200);
    const view = balancePooledViewSchema.parse(res.body);
    expect(view.view).toBe('pooled');
    expect(view.enrolled).toBe(80);
    expect(view.sites.map((s) => s.enrolled)).toEqual([40, 40]);
    const age = view.covariates.find((c) => c.key === 'age')!;
    const stored = await readCounted(t, study);
    expect(age.pooled.n).toBe(stored.length);
    expectNoArm(study, res.body);
    for (const path of ['balance?view=arms', 'balance/history', 'baseline-table', 'baseline-table.csv', 'alerts']) {
      const r = await sponsor.get(`/api/studies/${study.id}/${path}`);
      expect(r.status, path).toBe(403);
      expectNoArm(study, r.body);
    }
    expect((await sponsor.post(`/api/studies/${study.id}/balance/recompute`)).status).toBe(403);
  });

  it('when a coordinator or an auditor asks for balance, then every balance route is refused', async () => {
    for (const agent of [coordinator, auditor]) {
      for (const path of ['balance', 'balance?view=pooled', 'balance?view=arms', 'balance/history', 'baseline-table', 'alerts']) {
        const r = await agent.get(`/api/studies/${study.id}/${path}`);
        expect(r.status, path).toBe(403);
        expectNoArm(study, r.body);
      }
    }
  });

  it('when the statistician opens the baseline table, then there are no p-values unless asked, and then only in their own labelled field', async () => {
    const plain = await statistician.get(`/api/studies/${study.id}/baseline-table`);
    expect(plain.status).toBe(200);
    const table = baselineTableSchema.parse(plain.body);
    expect(table.pValues).toBeNull();
    expect(JSON.stringify(table.rows)).not.toMatch(/p-?value/i);
    expect(table.columns.map((c) => c.column)).toEqual([...study.armIds, 'overall']);
    expect(table.rows.filter((r) => r.covariateKey === 'age').map((r) => r.statistic)).toEqual(['mean_sd', 'median_iqr', 'missing']);
    expect(table.rows.filter((r) => r.covariateKey === 'region' && r.statistic === 'level').map((r) => r.level)).toEqual(['north', 'south', 'east']);

    const withP = baselineTableSchema.parse((await statistician.get(`/api/studies/${study.id}/baseline-table?pvalues=true`)).body);
    expect(withP.pValues!.caution).toMatch(/CONSORT/);
    const p = withP.pValues!.values.find((v) => v.covariateKey === 'age')!;
    // Direct: the stats package's one-way ANOVA on the stored rows.
    const stored = await readCounted(t, study);
    const byArm = study.armIds.map((arm) => stored.filter((s) => s.armId === arm).map((s) => s.values.get('age')!.n as number));
    expect(p.pValue).toBeCloseTo(oneWayAnova([byArm[1]!, byArm[0]!]).between.p, 12);
    expect(withP.rows).toEqual(table.rows);

    const csv = await statistician.get(`/api/studies/${study.id}/baseline-table.csv?pvalues=true`);
    expect(csv.status).toBe(200);
    expect(csv.headers['content-type']).toMatch(/text\/csv/);
    expect(csv.text.split('\n')[0]).toMatch(/^covariate,label,statistic,level,/);
    expect(csv.text).toMatch(/p-values \(labelled\)/);
    expect(csv.text).toMatch(/CONSORT/);
  });

  it('when the statistician asks for a recompute, then a full job is queued, the request is audited and freshness says a recompute is pending', async () => {
    const before = await auditCount(t);
    const res = await statistician.post(`/api/studies/${study.id}/balance/recompute`);
    expect(res.status).toBe(202);
    expect(res.body.jobId).toEqual(expect.any(String));
    // pg-boss's schema belongs to the application role.
    const [job] = (await t.ctx.ds.query(`SELECT data, state FROM pgboss.job WHERE id = $1`, [res.body.jobId])) as {
      data: { studyId: string; full: boolean };
      state: string;
    }[];
    expect(job).toMatchObject({ data: { studyId: study.id, full: true }, state: 'created' });
    expect(await auditCount(t)).toBe(before + 1);
    const [entry] = await t.ownerQuery<{ action: string }>(`SELECT action FROM audit_event ORDER BY seq DESC LIMIT 1`);
    expect(entry!.action).toBe('balance.recompute_requested');
    const view = await statistician.get(`/api/studies/${study.id}/balance`);
    expect(view.body.freshness.recomputePending).toBe(true);
    const again = await statistician.post(`/api/studies/${study.id}/balance/recompute`);
    expect(again.body).toEqual({ jobId: null, alreadyPending: true });
  });

  it('when several snapshots exist, then the history gives each covariate SMD against enrollment with a narrowing chance band', async () => {
    const r = rng(9);
    for (let k = 0; k < 3; k++) {
      await enroll(t, study, Array.from({ length: 40 }, (_, i) => ({
        site: i % 2,
        arm: i % 2 === 0 ? 0 : 1,
        values: { age: normal(r, 60, 8), smoker: r() < 0.3 ? 1 : 0, region: ['north', 'south', 'east'][i % 3]! },
      })));
      await runJob(t, { studyId: study.id, reason: 'enrollment' });
    }
    const res = await statistician.get(`/api/studies/${study.id}/balance/history`);
    expect(res.status).toBe(200);
    const h = balanceHistorySchema.parse(res.body);
    const age = h.series.find((s) => s.key === 'age')!;
    expect(age.points.map((p) => p.enrolledCount)).toEqual([80, 120, 160, 200]);
    const widths = age.points.map((p) => p.halfWidth!);
    for (let i = 1; i < widths.length; i++) expect(widths[i]!).toBeLessThan(widths[i - 1]!);
    const latest = balanceArmsViewSchema.parse((await statistician.get(`/api/studies/${study.id}/balance`)).body);
    expect(age.points.at(-1)!.smd).toBe(latest.covariates.find((c) => c.key === 'age')!.balance.comparisons[0]!.smd);
    const thin = balanceHistorySchema.parse((await statistician.get(`/api/studies/${study.id}/balance/history?points=2`)).body);
    expect(thin.series[0]!.points.at(-1)!.enrolledCount).toBe(200);
    expect(thin.series[0]!.points.length).toBeLessThanOrEqual(3);
  });

  it('lists every balance operation in the OpenAPI document', async () => {
    const doc = (await statistician.get('/api/openapi.json')).body as { paths: Record<string, Record<string, unknown>> };
    expect(Object.keys(doc.paths['/api/studies/{studyId}/balance']!)).toContain('get');
    expect(Object.keys(doc.paths['/api/studies/{studyId}/alerts/{alertId}']!)).toContain('patch');
    expect(doc.paths['/api/studies/{studyId}/balance/recompute']).toBeDefined();
    expect(doc.paths['/api/studies/{studyId}/baseline-table.csv']).toBeDefined();
  });
});
