import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, createUser, signIn, type TestContext } from '../../../test/harness.js';
import { castStudy, counts, enrollBody, trialDesign, type Cast } from '../../participants/__tests__/fixtures.js';
import { planStrata } from '../strata-planner.js';

let t: TestContext;
let c: Cast;
beforeAll(async () => {
  t = await createTestContext();
  c = await castStudy(t);
});
afterAll(async () => t.close());

describe('POST /studies', () => {
  it('when a statistician creates a study, then it exists in setup with them as its statistician, audited', async () => {
    const res = await c.statistician.post('/api/studies').send({ code: 'NEWSTUDY', title: 'A new study', kind: 'randomized_trial', blinding: 'blinded', targetSampleSize: 120 });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.study).toMatchObject({ code: 'NEWSTUDY', status: 'setup', myRole: 'statistician', allocation: null });
    const m = await t.ownerQuery(`SELECT role FROM membership m JOIN study s ON s.id = m.study_id WHERE s.code = 'NEWSTUDY'`);
    expect(m).toEqual([{ role: 'statistician' }]);
    const dup = await c.statistician.post('/api/studies').send({ code: 'NEWSTUDY', title: 'Again', kind: 'randomized_trial', blinding: 'blinded', targetSampleSize: 120 });
    expect(dup.status).toBe(409);
  });

  it('when a statistician creates a study, then their very next requests already see it and its design (no stale session)', async () => {
    // Warm the session this process keeps for a moment, as a page that has just listed the studies would.
    expect((await c.statistician.get('/api/me')).status).toBe(200);
    const res = await c.statistician.post('/api/studies').send({ code: 'FRESHLY', title: 'Seen at once', kind: 'randomized_trial', blinding: 'open_label', targetSampleSize: 400 });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const id: string = res.body.study.id;
    const detail = await c.statistician.get(`/api/studies/${id}`);
    expect(detail.status, JSON.stringify(detail.body)).toBe(200);
    const me = await c.statistician.get('/api/me');
    expect(me.body.memberships).toContainEqual(expect.objectContaining({ studyId: id, studyCode: 'FRESHLY', role: 'statistician' }));
    const list = await c.statistician.get('/api/studies');
    expect(list.body.studies.map((s: { code: string }) => s.code)).toContain('FRESHLY');
    const design = await c.statistician.put(`/api/studies/${id}/design`).send(trialDesign());
    expect(design.status, JSON.stringify(design.body)).toBe(200);
  });

  it('when a coordinator, sponsor or auditor tries to create a study, then 403 and nothing is written', async () => {
    const before = await counts(t);
    for (const who of [c.coordinator, c.sponsor, c.auditor]) {
      const res = await who.post('/api/studies').send({ code: 'NOPE', title: 'Not allowed', kind: 'randomized_trial', blinding: 'blinded', targetSampleSize: 100 });
      expect(res.status).toBe(403);
    }
    expect(await counts(t)).toEqual(before);
  });
});

describe('GET /studies/:studyId', () => {
  it('shows arm names, seed and block sizes to the statistician only; coordinators and sponsors see the arm count and the method', async () => {
    const stat = await c.statistician.get(`/api/studies/${c.studyId}`);
    expect(stat.body.study.arms.map((a: { code: string }) => a.code)).toEqual(['A', 'B']);
    expect(stat.body.study.allocation).toMatchObject({ method: 'permuted_blocks', blockSizes: [4, 6], algorithm: 'permuted-block' });
    expect(stat.body.study.allocation.seed).toMatch(/^[0-9a-f]{32}$/);
    expect(stat.body.study.strataPlan).toMatchObject({ strataCount: 4, maxBlockSize: 6, worstCaseImbalance: 12 });
    for (const who of [c.coordinator, c.sponsor, c.auditor]) {
      const res = await who.get(`/api/studies/${c.studyId}`);
      expect(res.status).toBe(200);
      expect(res.body.study.arms).toBeNull();
      expect(res.body.study.armCount).toBe(2);
      expect(res.body.study.allocation).toEqual({ method: 'permuted_blocks', concealed: true });
      expect(JSON.stringify(res.body)).not.toMatch(/Arm A|Arm B|"seed"|blockSizes/);
    }
    const admin = await c.admin.get(`/api/studies/${c.studyId}`);
    expect(admin.body.study.allocation.seed).toBeUndefined();
    expect(admin.body.study.arms).toBeNull();
    const coord = await c.coordinator.get(`/api/studies/${c.studyId}`);
    expect(coord.body.study.sites.map((s: { code: string }) => s.code)).toEqual(['S1']);
  });

  it('answers 404 to a user who is not a member of the study', async () => {
    const stranger = await createUser(t);
    const agent = await signIn(t, stranger.email);
    expect((await agent.get(`/api/studies/${c.studyId}`)).status).toBe(404);
  });
});

describe('PUT /studies/:studyId/design', () => {
  it('when the design changes after the first enrollment, then a reason is required, the version goes up and before/after are audited', async () => {
    const cc = await castStudy(t);
    const enrolled = await cc.coordinator.post(`/api/studies/${cc.studyId}/participants`).send(enrollBody(cc.siteIds[0]!));
    expect(enrolled.status).toBe(201);
    const v1 = (await cc.statistician.get(`/api/studies/${cc.studyId}`)).body.study.designVersion;
    const changed = trialDesign({ targetSampleSize: 500 });
    const before = await counts(t);
    const noReason = await cc.statistician.put(`/api/studies/${cc.studyId}/design`).send(changed);
    expect(noReason.status).toBe(400);
    expect(noReason.body.error.details.issues[0].path).toEqual(['reason']);
    expect(await counts(t)).toEqual(before);
    const ok = await cc.statistician.put(`/api/studies/${cc.studyId}/design`).send({ ...changed, reason: 'Sample size re-estimated per protocol amendment 2' });
    expect(ok.status, JSON.stringify(ok.body)).toBe(200);
    expect(ok.body.study).toMatchObject({ designVersion: v1 + 1, targetSampleSize: 500 });
    const audit = await t.ownerQuery<{ before: { targetSampleSize: number }; after: { targetSampleSize: number; seedFingerprint: string }; reason: string }>(
      `SELECT before, after, reason FROM audit_event WHERE action = 'study.design_saved' AND study_id = $1 ORDER BY seq DESC LIMIT 1`,
      [cc.studyId],
    );
    expect(audit[0]!.before.targetSampleSize).toBe(400);
    expect(audit[0]!.after.targetSampleSize).toBe(500);
    expect(audit[0]!.reason).toBe('Sample size re-estimated per protocol amendment 2');
    expect(JSON.stringify(audit[0])).not.toContain(ok.body.study.allocation.seed);
  });

  it.each([
    { name: 'the allocation scheme', change: { allocation: { method: 'permuted_blocks', blockSizes: [4], stratifyBySite: true } } },
    { name: 'an arm ratio', change: { arms: [{ code: 'A', name: 'Arm A', ratio: 2 }, { code: 'B', name: 'Arm B', ratio: 1 }], allocation: { method: 'permuted_blocks', blockSizes: [3, 6], stratifyBySite: true } } },
    { name: 'removing a covariate with values', change: { covariates: trialDesign().covariates.filter((x) => x.key !== 'smoker') } },
  ])('when $name would change after enrollment, then 409 and nothing is written', async ({ change }) => {
    const cc = await castStudy(t);
    await cc.coordinator.post(`/api/studies/${cc.studyId}/participants`).send(enrollBody(cc.siteIds[0]!));
    const before = await counts(t);
    const res = await cc.statistician.put(`/api/studies/${cc.studyId}/design`).send({ ...trialDesign(change as never), reason: 'Trying a change that is locked' });
    expect(res.status, JSON.stringify(res.body)).toBe(409);
    expect(await counts(t)).toEqual(before);
  });

  it('when a study is read before its first design save, then enrollment afterwards uses the saved design (no stale cache)', async () => {
    const { createStudy } = await import('../../../test/harness.js');
    const fresh = await createStudy(t, { sites: ['S1', 'S2'], arms: ['A', 'B'] });
    const coord = await createUser(t, { memberships: [{ studyId: fresh.id, role: 'coordinator', siteIds: [fresh.siteIds[0]!] }] });
    const stat = await createUser(t, { memberships: [{ studyId: fresh.id, role: 'statistician' }] });
    const [ca, sa] = [await signIn(t, coord.email), await signIn(t, stat.email)];
    const early = await ca.post(`/api/studies/${fresh.id}/participants`).send(enrollBody(fresh.siteIds[0]!));
    expect(early.status).toBe(400);
    expect((await sa.put(`/api/studies/${fresh.id}/design`).send(trialDesign())).status).toBe(200);
    const later = await ca.post(`/api/studies/${fresh.id}/participants`).send(enrollBody(fresh.siteIds[0]!));
    expect(later.status, JSON.stringify(later.body)).toBe(201);
  });

  it('when a cohort is given a randomization scheme, then 400', async () => {
    const res = await c.statistician.put(`/api/studies/${c.studyId}/design`).send(trialDesign({ allocation: { method: 'exposure_recorded', weighting: { estimand: 'ATE' } } }));
    expect(res.status).toBe(400);
  });
});

describe('strata planner (Hallstrom & Davis 1988: imbalance at most K*B/2)', () => {
  const covs = [
    { key: 'sex', kind: 'categorical', levels: ['f', 'm'], isStratification: true },
    { key: 'smoking', kind: 'categorical', levels: ['never', 'former', 'current'], isStratification: true },
    { key: 'copd', kind: 'binary', isStratification: true },
  ];
  it('computes K = product of levels (x sites) and the bound K*B/2', () => {
    const p = planStrata({ targetSampleSize: 400, siteCount: 6, covariates: covs.slice(0, 1), allocation: { method: 'permuted_blocks', blockSizes: [4, 6], stratifyBySite: true } })!;
    expect(p).toMatchObject({ strataCount: 12, maxBlockSize: 6, worstCaseImbalance: 36, perStratumAtTarget: 33.3 });
    expect(p.warnings).toEqual([]);
  });
  it('warns when the bound approaches the target, when strata are sparser than a block, and beyond three factors', () => {
    const p = planStrata({ targetSampleSize: 200, siteCount: 6, covariates: covs, allocation: { method: 'permuted_blocks', blockSizes: [4, 6], stratifyBySite: true } })!;
    expect(p.strataCount).toBe(72);
    expect(p.worstCaseImbalance).toBe(216);
    expect(p.warnings.map((w) => w.code)).toEqual(['imbalance_bound', 'sparse_strata', 'many_factors']);
  });
});

describe('GET /openapi.json', () => {
  it('lists every design, enrollment, import and upload operation', async () => {
    const res = await c.statistician.get('/api/openapi.json');
    expect(res.status).toBe(200);
    const ops = Object.entries(res.body.paths as Record<string, Record<string, unknown>>).flatMap(([p, m]) => Object.keys(m).map((k) => `${k.toUpperCase()} ${p}`));
    for (const op of [
      'POST /api/studies',
      'GET /api/studies/{studyId}',
      'PUT /api/studies/{studyId}/design',
      'POST /api/studies/{studyId}/screenings',
      'GET /api/studies/{studyId}/screenings',
      'POST /api/studies/{studyId}/participants',
      'GET /api/studies/{studyId}/participants',
      'GET /api/studies/{studyId}/participants/{participantId}',
      'PATCH /api/studies/{studyId}/participants/{participantId}',
      'POST /api/studies/{studyId}/participants/{participantId}/unblind',
      'GET /api/studies/{studyId}/allocation-list',
      'POST /api/studies/{studyId}/participants/import',
      'GET /api/studies/{studyId}/participants/export.csv',
      'POST /api/studies/{studyId}/participants/{participantId}/consent',
      'GET /api/studies/{studyId}/participants/{participantId}/consent/{documentId}',
    ]) {
      expect(ops).toContain(op);
    }
  });
});
