import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, type TestContext } from '../../../test/harness.js';
import { baseline, castStudy, counts, daysAgo, enrollBody, type Cast } from './fixtures.js';

let t: TestContext;
let c: Cast;
beforeAll(async () => {
  t = await createTestContext();
  c = await castStudy(t);
});
afterAll(async () => t.close());

describe('POST /studies/:studyId/participants', () => {
  it('when a coordinator enrolls at their site, then the participant, values, allocation and audit entries are written together and the arm is not shown', async () => {
    const before = await counts(t);
    const res = await c.coordinator.post(`/api/studies/${c.studyId}/participants`).send(enrollBody(c.siteIds[0]!));
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.participant.code).toMatch(/^S[0-9A-F]{6}-S1-[0-9A-HJKMNP-TV-Z]{6}$/);
    expect(res.body.allocation.kitCode).toMatch(/^K-/);
    expect(res.body.allocation.arm).toBeUndefined();
    expect(res.body.participant.arm).toBeUndefined();
    expect(JSON.stringify(res.body)).not.toMatch(/"Arm A"|"Arm B"|armId/);
    const after = await counts(t);
    expect(after.participants - before.participants).toBe(1);
    expect(after.baseline - before.baseline).toBe(4);
    expect(after.allocations - before.allocations).toBe(1);
    expect(after.audit - before.audit).toBe(2);
    const rows = await t.ownerQuery<{ action: string; reveals_allocation: boolean }>(
      `SELECT action, reveals_allocation FROM audit_event WHERE entity_id = $1 ORDER BY seq`,
      [res.body.participant.id],
    );
    expect(rows).toEqual([
      { action: 'participant.enrolled', reveals_allocation: false },
      { action: 'allocation.assigned', reveals_allocation: true },
    ]);
    const job: { n: number }[] = await t.ctx.ds.query(`SELECT count(*)::int AS n FROM pgboss.job WHERE name = 'balance.recompute' AND singleton_key = $1`, [c.studyId]);
    expect(job[0]!.n).toBeGreaterThanOrEqual(1);
  });

  const bad: { name: string; body: (site: string) => object; path: string }[] = [
    { name: 'age below the range', body: (s) => enrollBody(s, { baseline: baseline({ age: { value: 17, measuredOn: daysAgo(1) } }) }), path: 'baseline.age.value' },
    { name: 'too many decimals', body: (s) => enrollBody(s, { baseline: baseline({ fev1_pct: { value: 50.25, measuredOn: daysAgo(1) } }) }), path: 'baseline.fev1_pct.value' },
    { name: 'wrong level', body: (s) => enrollBody(s, { baseline: baseline({ sex: { value: 'unknown', measuredOn: daysAgo(1) } }) }), path: 'baseline.sex.value' },
    { name: 'binary given a number', body: (s) => enrollBody(s, { baseline: baseline({ smoker: { value: 1, measuredOn: daysAgo(1) } }) }), path: 'baseline.smoker.value' },
    { name: 'missing required covariate', body: (s) => { const b: Record<string, unknown> = baseline(); delete b.fev1_pct; return enrollBody(s, { baseline: b }); }, path: 'baseline.fev1_pct' },
    { name: 'measured in the future', body: (s) => enrollBody(s, { baseline: baseline({ age: { value: 60, measuredOn: daysAgo(-1) } }) }), path: 'baseline.age.measuredOn' },
    { name: 'measured before the window', body: (s) => enrollBody(s, { baseline: baseline({ age: { value: 60, measuredOn: daysAgo(31) } }) }), path: 'baseline.age.measuredOn' },
    { name: 'consent in the future', body: (s) => enrollBody(s, { consent: { date: daysAgo(-2), version: '2.0' } }), path: 'consent.date' },
    { name: 'ineligible (aged 39)', body: (s) => enrollBody(s, { baseline: baseline({ age: { value: 39, measuredOn: daysAgo(1) } }) }), path: 'eligibility.age40' },
    { name: 'exclusion applies (pregnant)', body: (s) => enrollBody(s, { screeningAnswers: { pregnant: true } }), path: 'eligibility.notpreg' },
    { name: 'exposure chosen in a randomized trial', body: (s) => enrollBody(s, { exposureArmId: c.armIds[0] }), path: 'exposureArmId' },
  ];
  it.each(bad)('when the form has $name, then 400 names $path and nothing is written', async ({ body, path }) => {
    const before = await counts(t);
    const res = await c.coordinator.post(`/api/studies/${c.studyId}/participants`).send(body(c.siteIds[0]!));
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('validation_failed');
    const issue = res.body.error.details.issues.find((i: { path: string[] }) => i.path.join('.') === path);
    expect(issue, JSON.stringify(res.body.error.details.issues)).toBeDefined();
    expect(issue.message.length).toBeGreaterThan(5);
    expect(await counts(t)).toEqual(before);
  });

  it('when a coordinator enrolls at another site, then 403 and nothing is written', async () => {
    const before = await counts(t);
    const res = await c.coordinator.post(`/api/studies/${c.studyId}/participants`).send(enrollBody(c.siteIds[1]!));
    expect(res.status).toBe(403);
    expect(await counts(t)).toEqual(before);
  });

  it('when a sponsor tries to enroll, then 403 and nothing is written', async () => {
    const before = await counts(t);
    const res = await c.sponsor.post(`/api/studies/${c.studyId}/participants`).send(enrollBody(c.siteIds[0]!));
    expect(res.status).toBe(403);
    expect(await counts(t)).toEqual(before);
  });
});

describe('screening then enrollment', () => {
  it('when a candidate fails a criterion, then the screening log records the failed criterion and the candidate cannot be enrolled', async () => {
    const res = await c.coordinator.post(`/api/studies/${c.studyId}/screenings`).send({ siteId: c.siteIds[0], answers: { age: 35, pregnant: false } });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.screening.eligible).toBe(false);
    expect(res.body.screening.failedCriteria.map((f: { id: string }) => f.id)).toEqual(['age40']);
    const log = await c.coordinator.get(`/api/studies/${c.studyId}/screenings?eligible=false`);
    expect(log.body.items.some((s: { id: string }) => s.id === res.body.screening.id)).toBe(true);
    const enroll = await c.coordinator.post(`/api/studies/${c.studyId}/participants`).send(enrollBody(c.siteIds[0]!, { screeningId: res.body.screening.id }));
    expect(enroll.status).toBe(409);
  });

  it('when an eligible candidate is enrolled from their screening, then the same participant row becomes enrolled', async () => {
    const s = await c.coordinator.post(`/api/studies/${c.studyId}/screenings`).send({ siteId: c.siteIds[0], answers: { age: 55, pregnant: false } });
    expect(s.body.screening.eligible).toBe(true);
    const res = await c.coordinator.post(`/api/studies/${c.studyId}/participants`).send({ ...enrollBody(c.siteIds[0]!, { screeningId: s.body.screening.id }), screeningAnswers: undefined });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.participant.id).toBe(s.body.screening.participant.id);
    const again = await c.coordinator.post(`/api/studies/${c.studyId}/participants`).send(enrollBody(c.siteIds[0]!, { screeningId: s.body.screening.id }));
    expect(again.status).toBe(409);
  });
});
