import { analysisNote, lockSignatureMeaning, runResultSchema } from '@counterpoise/contracts/analysis';
import { ancova, oneWayAnova, slopeHomogeneityTest } from '@counterpoise/stats';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditCount, createTestContext, TEST_PASSWORD, type TestContext } from '../../../test/harness.js';
import { baseSpec, castAnalysisStudy, daysAgo, outcomeRows, type Cast } from './analysis-fixtures.js';

let t: TestContext;
beforeAll(async () => {
  t = await createTestContext();
});
afterAll(async () => {
  await t.close();
});

const url = (c: Cast, tail: string) => `/api/studies/${c.studyId}${tail}`;

async function prepared(opts: Parameters<typeof castAnalysisStudy>[1] = {}, spec = baseSpec()) {
  const c = await castAnalysisStudy(t, opts);
  const saved = await c.statistician.put(url(c, '/analysis/spec')).send({ spec });
  expect(saved.status).toBe(200);
  const out = await c.statistician.put(url(c, '/outcomes')).send({ outcomeKey: spec.outcome.key, rows: outcomeRows(c) });
  expect(out.status).toBe(200);
  return c;
}

const lock = (c: Cast, version: number, password = TEST_PASSWORD) =>
  c.statistician.post(url(c, '/analysis/spec/lock')).send({ version, password, meaning: lockSignatureMeaning });

/** Relative closeness with the inputs and both values in the failure message. */
function close(actual: number, expected: number, what: string, tol = 1e-9) {
  const delta = Math.abs(actual - expected) / Math.max(1, Math.abs(expected));
  expect(delta, `${what}: expected ${expected}, actual ${actual}, relative delta ${delta}`).toBeLessThan(tol);
}

/** The analysis population read back from the database, built into the model independently of the API's code. */
async function directModel(c: Cast) {
  const rows = await t.ownerQuery<{ arm: string; site: string; y: number; walk_base: number; age: number; sex: string }>(
    `SELECT a2.code AS arm, s.code AS site, o.value AS y,
            (SELECT value_number FROM baseline_value WHERE participant_id = p.id AND covariate_id = $2) AS walk_base,
            (SELECT value_number FROM baseline_value WHERE participant_id = p.id AND covariate_id = $3) AS age,
            (SELECT value_text FROM baseline_value WHERE participant_id = p.id AND covariate_id = $4) AS sex
       FROM participant p JOIN site s ON s.id = p.site_id
       JOIN allocation a ON a.participant_id = p.id JOIN arm a2 ON a2.id = a.arm_id
       JOIN outcome_value o ON o.participant_id = p.id AND o.outcome_key = 'walk_final'
      WHERE p.study_id = $1 AND p.status IN ('enrolled', 'withdrawn')
      ORDER BY random()`,
    [c.studyId, c.covariateIds.walk_base, c.covariateIds.age, c.covariateIds.sex],
  );
  const input = {
    outcome: rows.map((r) => r.y),
    group: rows.map((r) => r.arm),
    covariates: {
      walk_base: rows.map((r) => r.walk_base),
      age: rows.map((r) => r.age),
      'sex=male': rows.map((r) => (r.sex === 'male' ? 1 : 0)),
      'site=S2': rows.map((r) => (r.site === 'S2' ? 1 : 0)),
    },
  };
  return { rows, input, fit: ancova(input) };
}

describe('POST /studies/:studyId/analysis/runs', () => {
  it('when the statistician runs the locked specification, then F, adjusted means and slopes equal a direct ancova on the stored rows', async () => {
    const c = await prepared();
    expect((await lock(c, 1)).status).toBe(200);
    const before = await auditCount(t);
    const res = await c.statistician.post(url(c, '/analysis/runs')).send({});
    expect(res.status).toBe(201);
    expect(res.body.note).toBe(analysisNote);
    const result = runResultSchema.parse(res.body.run.result);
    expect(result.note).toBe(analysisNote);
    expect(result.exploratory).toBe(false);

    const { rows, input, fit } = await directModel(c);
    expect(result.data.analysed).toBe(rows.length);
    const g = fit.terms.find((x) => x.term === 'group')!;
    close(result.groupEffect.adjusted.f, g.f, 'ANCOVA F for the arm');
    close(result.groupEffect.adjusted.p, g.p, 'ANCOVA p for the arm');
    close(result.groupEffect.adjusted.partialEtaSquared, g.partialEtaSquared, 'partial eta squared');
    close(result.adjusted.errorMeanSquare, fit.error.ms, 'ANCOVA error mean square');
    for (const m of fit.adjustedMeans) {
      const got = result.adjustedMeans.find((x) => x.code === m.group)!;
      close(got.mean, m.mean, `adjusted mean of ${String(m.group)}`);
      close(got.se, m.se, `SE of ${String(m.group)}`);
      close(got.lower, m.lower, `lower 95% limit of ${String(m.group)}`);
      close(got.upper, m.upper, `upper 95% limit of ${String(m.group)}`);
    }
    for (const s of fit.slopes) close(result.slopes.find((x) => x.column === s.covariate)!.estimate, s.estimate, `pooled slope of ${s.covariate}`);

    // The one-way ANOVA side by side, from the same rows: the error mean square shrinks with the covariates.
    const one = oneWayAnova(['HBW', 'UC'].map((arm) => rows.filter((r) => r.arm === arm).map((r) => r.y)));
    close(result.groupEffect.unadjusted.f, one.between.f, 'one-way ANOVA F');
    close(result.unadjusted.errorMeanSquare, one.within.ms, 'one-way error mean square');
    expect(result.adjusted.errorMeanSquare).toBeLessThan(result.unadjusted.errorMeanSquare);

    const sh = slopeHomogeneityTest({ outcome: input.outcome, group: input.group, covariates: { walk_base: input.covariates.walk_base, age: input.covariates.age } });
    close(result.slopeHomogeneity!.f, sh.f, 'slope homogeneity F');
    expect(result.checks.map((x) => x.id)).toEqual(['independence', 'normality', 'variance', 'sd_ratio', 'linearity', 'slopes']);
    expect(result.checks.find((x) => x.id === 'sd_ratio')!.source).toMatch(/common practice/);
    expect(result.linearity!.groups).toHaveLength(2);
    expect(result.normality.qq.length).toBe(rows.length);
    expect(result.partition.reduce((s, p) => s + p.share, 0)).toBeCloseTo(1, 9);

    const stored = await t.ownerQuery<{ exploratory: boolean; spec_version: number; f: number }>(
      `SELECT exploratory, spec_version, (result -> 'groupEffect' -> 'adjusted' ->> 'f')::float8 AS f FROM analysis_run WHERE id = $1`,
      [res.body.run.id],
    );
    expect(stored[0]).toMatchObject({ exploratory: false, spec_version: 1 });
    close(stored[0]!.f, g.f, 'stored F');
    expect(await auditCount(t)).toBe(before + 1);
    const [audit] = await t.ownerQuery<{ action: string; reveals_allocation: boolean }>(
      `SELECT action, reveals_allocation FROM audit_event WHERE entity_id = $1`,
      [res.body.run.id],
    );
    expect(audit).toEqual({ action: 'analysis.run', reveals_allocation: true });

    const list = await c.statistician.get(url(c, '/analysis/runs'));
    expect(list.body.runs).toHaveLength(1);
    const one2 = await c.statistician.get(url(c, `/analysis/runs/${res.body.run.id}`));
    expect(one2.status).toBe(200);
    close(one2.body.run.result.groupEffect.adjusted.f, g.f, 'F read back');
  });

  it('when a locked specification is changed and run, then the run is exploratory and needs a reason; the locked version stays as signed', async () => {
    const c = await prepared();
    expect((await lock(c, 1)).status).toBe(200);
    const changed = await c.statistician
      .put(url(c, '/analysis/spec'))
      .send({ spec: baseSpec({ covariates: [{ key: 'age', form: 'linear' }, { key: 'fev1', form: 'linear' }] }), reason: 'Add FEV1 after review' });
    expect(changed.status).toBe(200);
    expect(changed.body.spec).toMatchObject({ version: 2, status: 'draft' });

    const spec = await c.statistician.get(url(c, '/analysis/spec'));
    expect(spec.body.nextRunExploratory).toBe(true);
    expect(spec.body.firstLockedVersion).toBe(1);
    expect(spec.body.cautions.map((x: { code: string }) => x.code)).toContain('changed_after_lock');

    const before = await auditCount(t);
    const refused = await c.statistician.post(url(c, '/analysis/runs')).send({});
    expect(refused.status).toBe(400);
    expect(refused.body.error.details.issues[0].path).toEqual(['reason']);
    expect(await auditCount(t)).toBe(before);
    expect(await t.ownerQuery(`SELECT id FROM analysis_run WHERE study_id = $1`, [c.studyId])).toHaveLength(0);

    const run = await c.statistician.post(url(c, '/analysis/runs')).send({ reason: 'Sensitivity analysis with FEV1' });
    expect(run.status).toBe(201);
    expect(run.body.run).toMatchObject({ exploratory: true, specVersion: 2, reason: 'Sensitivity analysis with FEV1' });
    const c3 = run.body.run.result.cautions.find((x: { number: number }) => x.number === 3);
    expect(c3.message).toMatch(/version 1 is the locked/);

    // The pre-specified version can still be run as the primary analysis.
    const primary = await c.statistician.post(url(c, '/analysis/runs')).send({ specVersion: 1 });
    expect(primary.status).toBe(201);
    expect(primary.body.run.exploratory).toBe(false);

    const [v1] = await t.ownerQuery<{ status: string; spec: { covariates: unknown[] } }>(
      `SELECT status, spec FROM analysis_spec WHERE study_id = $1 AND version = 1`,
      [c.studyId],
    );
    expect(v1).toMatchObject({ status: 'locked', spec: { covariates: [{ key: 'age', form: 'linear' }] } });
    // The database itself refuses to change a locked version.
    await expect(t.ownerQuery(`UPDATE analysis_spec SET spec = '{}' WHERE study_id = $1 AND version = 1`, [c.studyId])).rejects.toThrow(/locked/);
  });

  it('when a covariate was measured after randomization, then it is blocked from the model and the caution says so', async () => {
    const c = await castAnalysisStudy(t);
    // Three participants had FEV1 measured five days after allocation.
    for (const p of c.participants.slice(0, 3)) {
      await t.ownerQuery(`UPDATE baseline_value SET measured_on = $3 WHERE participant_id = $1 AND covariate_id = $2`, [p.id, c.covariateIds.fev1, daysAgo(25)]);
    }
    const spec = baseSpec({ covariates: [{ key: 'age', form: 'linear' }, { key: 'fev1', form: 'linear' }] });
    await c.statistician.put(url(c, '/analysis/spec')).send({ spec });
    await c.statistician.put(url(c, '/outcomes')).send({ outcomeKey: 'walk_final', rows: outcomeRows(c) });

    const s = await c.statistician.get(url(c, '/analysis/spec'));
    const fev1 = s.body.context.covariates.find((x: { key: string }) => x.key === 'fev1');
    expect(fev1.measuredAfterRandomization).toBe(3);
    expect(s.body.cautions.find((x: { number: number }) => x.number === 4).severity).toBe('blocked');

    await lock(c, 1);
    const run = await c.statistician.post(url(c, '/analysis/runs')).send({});
    expect(run.status).toBe(201);
    const result = run.body.run.result;
    expect(result.model.blocked).toEqual([{ key: 'fev1', label: 'FEV1 % predicted', valuesAfterRandomization: 3 }]);
    expect(result.model.terms.map((x: { key: string }) => x.key)).not.toContain('fev1');
    expect(result.adjusted.rows.map((x: { source: string }) => x.source)).not.toContain('fev1');
    expect(result.cautions.find((x: { number: number }) => x.number === 4)).toMatchObject({ severity: 'blocked', code: 'post_randomization_covariate' });
    // Without FEV1 the fit equals the direct model.
    const { fit } = await directModel(c);
    close(result.groupEffect.adjusted.f, fit.terms.find((x) => x.term === 'group')!.f, 'F without the blocked covariate');
  });

  it('when stratification factors are left out, then the run warns (caution 5)', async () => {
    const c = await prepared({}, baseSpec({ includeStratificationFactors: false }));
    await lock(c, 1);
    const run = await c.statistician.post(url(c, '/analysis/runs')).send({});
    const c5 = run.body.run.result.cautions.find((x: { number: number }) => x.number === 5);
    expect(c5.message).toMatch(/Site, Sex/);
  });

  it('when the model has many parameters for the participants, then caution 6 warns and says it is common practice', async () => {
    const spec = baseSpec({ covariates: [{ key: 'age', form: 'linear' }, { key: 'fev1', form: 'linear' }] });
    const c = await prepared({ n: 40 }, spec);
    await lock(c, 1);
    const run = await c.statistician.post(url(c, '/analysis/runs')).send({});
    const result = run.body.run.result;
    // Two arms, baseline walk, age, FEV1, sex (male) and site (S2): 7 parameters for 40 participants.
    expect(result.model.parameters).toBe(7);
    const c6 = result.cautions.find((x: { number: number }) => x.number === 6);
    expect(c6.message).toMatch(/7 parameters for 40 participants/);
    expect(c6.source).toBe('common practice');
  });

  it('when the arms have different slopes, then caution 7 says the common-slope ANCOVA is not representative', async () => {
    const c = await prepared({ n: 120, slopes: [1.4, 0.2], seed: 11 });
    await lock(c, 1);
    const run = await c.statistician.post(url(c, '/analysis/runs')).send({});
    const result = run.body.run.result;
    expect(result.slopeHomogeneity.p).toBeLessThan(0.05);
    expect(result.checks.find((x: { id: string }) => x.id === 'slopes').status).toBe('attention');
    expect(result.cautions.find((x: { number: number }) => x.number === 7).title).toMatch(/not representative/);
  });

  it('when the study is an observational cohort, then the change-score analysis is shown beside the ANCOVA (caution 8)', async () => {
    const c = await prepared({ kind: 'observational_cohort', eligibility: [{ id: 'low', kind: 'inclusion', label: 'Walk under 450 m', field: 'walk_base', op: '<', value: 450 }] });
    await lock(c, 1);
    const run = await c.statistician.post(url(c, '/analysis/runs')).send({});
    expect(run.status).toBe(201);
    const result = run.body.run.result;
    const codes = result.cautions.map((x: { code: string }) => x.code);
    expect(codes).toEqual(expect.arrayContaining(['non_randomized_groups', 'threshold_enrollment', 'covariate_reliability']));
    expect(result.cautions.find((x: { number: number }) => x.number === 9).severity).toBe('warning');
    // Change scores: the difference in mean change equals a one-way comparison of (outcome - baseline).
    const rows = await t.ownerQuery<{ arm: string; y: number; b: number }>(
      `SELECT a.code AS arm, o.value AS y, bv.value_number AS b FROM participant p JOIN arm a ON a.id = p.exposure_arm_id
         JOIN outcome_value o ON o.participant_id = p.id JOIN baseline_value bv ON bv.participant_id = p.id AND bv.covariate_id = $2
        WHERE p.study_id = $1`,
      [c.studyId, c.covariateIds.walk_base],
    );
    const change = (arm: string) => rows.filter((r) => r.arm === arm).map((r) => r.y - r.b);
    const mean = (xs: number[]) => xs.reduce((s, x) => s + x, 0) / xs.length;
    close(result.changeScore.difference.estimate, mean(change('HBW')) - mean(change('UC')), 'difference in mean change');
    expect(result.changeScore.explanation).toMatch(/Lord/);
  });
});

describe('POST /studies/:studyId/analysis/spec/lock', () => {
  it('when the password is wrong, then the lock is refused and nothing is written', async () => {
    const c = await prepared();
    const before = await auditCount(t);
    const res = await lock(c, 1, 'not-the-password');
    expect(res.status).toBe(400);
    expect(res.body.error.details.issues[0].path).toEqual(['password']);
    expect(await auditCount(t)).toBe(before);
    const [row] = await t.ownerQuery<{ status: string; locked_at: Date | null }>(`SELECT status, locked_at FROM analysis_spec WHERE study_id = $1`, [c.studyId]);
    expect(row).toEqual({ status: 'draft', locked_at: null });
  });

  it('when the statistician signs, then printed name, UTC time, meaning and content hash are stored and shown', async () => {
    const c = await prepared();
    const res = await lock(c, 1);
    expect(res.status).toBe(200);
    const sig = res.body.spec.signature;
    expect(sig.meaning).toBe(lockSignatureMeaning);
    expect(sig.signerName).toMatch(/^user-/);
    expect(sig.signedAt).toMatch(/Z$/);
    expect(sig.contentSha256).toMatch(/^[0-9a-f]{64}$/);
    const [audit] = await t.ownerQuery<{ after: { signature: { meaning: string } } }>(
      `SELECT after FROM audit_event WHERE action = 'analysis.spec_locked' AND study_id = $1`,
      [c.studyId],
    );
    expect(audit!.after.signature.meaning).toBe(lockSignatureMeaning);
    expect((await lock(c, 1)).status).toBe(409);
  });

  it('when the meaning is not confirmed, then 400 and nothing is written', async () => {
    const c = await prepared();
    const before = await auditCount(t);
    const res = await c.statistician.post(url(c, '/analysis/spec/lock')).send({ version: 1, password: TEST_PASSWORD, meaning: 'ok' });
    expect(res.status).toBe(400);
    expect(await auditCount(t)).toBe(before);
  });
});

describe('PUT /studies/:studyId/outcomes', () => {
  it('when a recorded value changes, then a reason is required and the correction is audited with before and after', async () => {
    const c = await prepared();
    const p = c.participants[0]!;
    const row = { participantCode: p.code, value: 444.4, measuredOn: daysAgo(6) };
    const before = await auditCount(t);
    const refused = await c.statistician.put(url(c, '/outcomes')).send({ outcomeKey: 'walk_final', rows: [row] });
    expect(refused.status).toBe(400);
    expect(await auditCount(t)).toBe(before);
    const ok = await c.statistician.put(url(c, '/outcomes')).send({ outcomeKey: 'walk_final', rows: [row], reason: 'Transcription error' });
    expect(ok.body).toMatchObject({ created: 0, corrected: 1, unchanged: 0 });
    const [stored] = await t.ownerQuery<{ value: number }>(`SELECT value FROM outcome_value WHERE participant_id = $1`, [p.id]);
    expect(stored!.value).toBe(444.4);
    const [audit] = await t.ownerQuery<{ before: { value: number }; after: { value: number }; reason: string }>(
      `SELECT before, after, reason FROM audit_event WHERE action = 'outcome.corrected' AND study_id = $1`,
      [c.studyId],
    );
    expect(audit).toMatchObject({ after: { value: 444.4 }, reason: 'Transcription error' });
    expect(audit!.before.value).toBe(Math.round(p.outcome * 10) / 10);
    // Sending the same again changes nothing.
    const again = await c.statistician.put(url(c, '/outcomes')).send({ outcomeKey: 'walk_final', rows: [row] });
    expect(again.body).toMatchObject({ created: 0, corrected: 0, unchanged: 1 });
  });

  it('when an outcome is dated before enrollment or the participant is unknown, then nothing is written', async () => {
    const c = await prepared();
    const before = await auditCount(t);
    const res = await c.statistician.put(url(c, '/outcomes')).send({
      outcomeKey: 'walk_final',
      rows: [
        { participantCode: 'NOPE', value: 1, measuredOn: daysAgo(2) },
        { participantCode: c.participants[1]!.code, value: 1, measuredOn: daysAgo(90) },
      ],
      reason: 'test',
    });
    expect(res.status).toBe(400);
    expect(res.body.error.details.issues.map((i: { path: string[] }) => i.path.join('.'))).toEqual(['rows.0.participantCode', 'rows.1.measuredOn']);
    expect(await auditCount(t)).toBe(before);
  });
});
