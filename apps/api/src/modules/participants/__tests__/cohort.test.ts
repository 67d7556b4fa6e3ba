import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, type TestContext } from '../../../test/harness.js';
import { castStudy, counts, daysAgo, enrollBody, trialDesign, type Cast } from './fixtures.js';

let t: TestContext;
let c: Cast;
beforeAll(async () => {
  t = await createTestContext();
  c = await castStudy(t, { kind: 'observational_cohort', blinding: 'open_label', design: trialDesign({ allocation: { method: 'exposure_recorded', weighting: { estimand: 'overlap' } } }) });
});
afterAll(async () => t.close());

describe('observational cohort', () => {
  it('when a coordinator records the exposure group, then no allocation is made and the exposure is stored and audited as allocation-revealing', async () => {
    const before = await counts(t);
    const res = await c.coordinator.post(`/api/studies/${c.studyId}/participants`).send(enrollBody(c.siteIds[0]!, { exposureArmId: c.armIds[1] }));
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.allocation).toBeNull();
    expect(res.body.participant.arm.code).toBe('B');
    const after = await counts(t);
    expect(after.allocations).toBe(before.allocations);
    const row = await t.ownerQuery<{ exposure_arm_id: string }>(`SELECT exposure_arm_id FROM participant WHERE id = $1`, [res.body.participant.id]);
    expect(row[0]!.exposure_arm_id).toBe(c.armIds[1]);
    const audit = await t.ownerQuery<{ action: string; reveals_allocation: boolean }>(`SELECT action, reveals_allocation FROM audit_event WHERE entity_id = $1 ORDER BY seq`, [res.body.participant.id]);
    expect(audit).toEqual([
      { action: 'participant.enrolled', reveals_allocation: false },
      { action: 'exposure.recorded', reveals_allocation: true },
    ]);
  });

  it('when the exposure is missing or not a group of the study, then 400 and nothing is written', async () => {
    const before = await counts(t);
    const missing = await c.coordinator.post(`/api/studies/${c.studyId}/participants`).send(enrollBody(c.siteIds[0]!));
    expect(missing.status).toBe(400);
    expect(missing.body.error.details.issues.map((i: { path: string[] }) => i.path.join('.'))).toContain('exposureArmId');
    const wrong = await c.coordinator.post(`/api/studies/${c.studyId}/participants`).send(enrollBody(c.siteIds[0]!, { exposureArmId: c.siteIds[0] }));
    expect(wrong.status).toBe(400);
    expect(await counts(t)).toEqual(before);
  });

  it('imports the exposure column by arm code and refuses unknown codes', async () => {
    const d = daysAgo(2);
    const header = 'participant_ref,site,exposure,consent_date,consent_version,age,age_date,fev1_pct,fev1_pct_date,sex,sex_date,smoker,smoker_date,pregnant';
    const file = `${header}\nC1,S1,A,${d},1,50,${d},50.0,${d},male,${d},no,${d},no\nC2,S1,ZZ,${d},1,50,${d},50.0,${d},male,${d},no,${d},no\n`;
    const res = await c.coordinator.post(`/api/studies/${c.studyId}/participants/import?mode=preview`).attach('file', Buffer.from(file), 'c.csv');
    expect(res.body.report.errors).toEqual([{ row: 3, field: 'exposure', message: "Unknown exposure group 'ZZ'" }]);
    const ok = await c.coordinator.post(`/api/studies/${c.studyId}/participants/import?mode=commit`).attach('file', Buffer.from(file.split('\n').slice(0, 2).join('\n')), 'c.csv');
    expect(ok.status, JSON.stringify(ok.body)).toBe(201);
    const row = await t.ownerQuery<{ code: string }>(`SELECT a.code FROM participant p JOIN arm a ON a.id = p.exposure_arm_id WHERE p.import_key = 'C1'`);
    expect(row[0]!.code).toBe('A');
  });
});
