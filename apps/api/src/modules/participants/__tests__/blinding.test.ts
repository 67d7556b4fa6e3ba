import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, type TestContext } from '../../../test/harness.js';
import { castStudy, daysAgo, enrollBody, trialDesign, type Cast } from './fixtures.js';

let t: TestContext;
let c: Cast;
let armIds: string[];
const ARMS = [
  { code: 'ZEPHYRX', name: 'Zephyr programme', ratio: 1 },
  { code: 'QUOLLY', name: 'Quoll usual care', ratio: 1 },
];
const leaks = (text: string) => [/ZEPHYRX|QUOLLY|Zephyr|Quoll/, ...armIds.map((id) => new RegExp(id))].filter((re) => re.test(text)).map(String);

beforeAll(async () => {
  t = await createTestContext();
  c = await castStudy(t, { design: trialDesign({ arms: ARMS }) });
  armIds = (await t.ownerQuery<{ id: string }>(`SELECT id FROM arm WHERE study_id = $1`, [c.studyId])).map((r) => r.id);
  for (let i = 0; i < 6; i++) await c.coordinator.post(`/api/studies/${c.studyId}/participants`).send(enrollBody(c.siteIds[0]!));
  await c.otherCoordinator.post(`/api/studies/${c.studyId}/participants`).send(enrollBody(c.siteIds[1]!));
  const header = 'participant_ref,site,enrollment_date,consent_date,consent_version,age,age_date,fev1_pct,fev1_pct_date,sex,sex_date,smoker,smoker_date,pregnant';
  const d = daysAgo(2);
  await c.coordinator.post(`/api/studies/${c.studyId}/participants/import?mode=commit`).attach('file', Buffer.from(`${header}\nR1,S1,${d},${d},1,50,${d},50.0,${d},male,${d},no,${d},no\n`), 'f.csv');
  const someone = (await t.ownerQuery<{ id: string }>(`SELECT id FROM participant WHERE study_id = $1 AND status = 'enrolled' LIMIT 1`, [c.studyId]))[0]!.id;
  await c.statistician.post(`/api/studies/${c.studyId}/participants/${someone}/unblind`).send({ reason: 'Emergency: serious adverse event' });
});
afterAll(async () => t.close());

describe('blinded roles never receive an arm', () => {
  it('the statistician does see arms (so the checks below can fail)', async () => {
    const list = await c.statistician.get(`/api/studies/${c.studyId}/participants?pageSize=200`);
    expect(leaks(JSON.stringify(list.body)).length).toBeGreaterThan(0);
    const audit = await c.statistician.get(`/api/audit?studyId=${c.studyId}&limit=500`);
    expect(leaks(JSON.stringify(audit.body)).length).toBeGreaterThan(0);
  });

  it.each(['coordinator', 'otherCoordinator', 'sponsor', 'auditor', 'admin'] as const)('in any response, export or audit entry readable by the %s', async (role) => {
    const agent = c[role];
    const ids = (await t.ownerQuery<{ id: string }>(`SELECT id FROM participant WHERE study_id = $1`, [c.studyId])).map((r) => r.id);
    const urls = [
      `/api/studies/${c.studyId}`,
      `/api/studies/${c.studyId}/participants?pageSize=200`,
      `/api/studies/${c.studyId}/participants/export.csv`,
      `/api/studies/${c.studyId}/screenings`,
      `/api/audit?studyId=${c.studyId}&limit=500`,
      `/api/audit/export.csv?studyId=${c.studyId}`,
      ...ids.map((id) => `/api/studies/${c.studyId}/participants/${id}`),
    ];
    let readable = 0;
    for (const url of urls) {
      const res = await agent.get(url);
      if (res.status !== 200) continue;
      readable++;
      expect(leaks(res.text), `${role} ${url}`).toEqual([]);
    }
    expect(readable).toBeGreaterThan(0);
  });
});

describe('open-label studies', () => {
  it('show the coordinator the arm of their own participant, and no one at a site any counts by arm', async () => {
    const o = await castStudy(t, { blinding: 'open_label', design: trialDesign({ arms: ARMS }) });
    const res = await o.coordinator.post(`/api/studies/${o.studyId}/participants`).send(enrollBody(o.siteIds[0]!));
    expect(res.status).toBe(201);
    expect(['ZEPHYRX', 'QUOLLY']).toContain(res.body.allocation.arm.code);
    const study = await o.coordinator.get(`/api/studies/${o.studyId}`);
    expect(study.body.study.canSeeArms).toBe(true);
    // The method only: no block sizes (which would make the next allocation predictable), no counts by arm.
    expect(study.body.study.allocation).toEqual({ method: 'permuted_blocks', concealed: true });
    expect(study.body.study.strataPlan).toBeNull();
    const list = await o.coordinator.get(`/api/studies/${o.studyId}/participants`);
    expect(Object.keys(list.body).sort()).toEqual(['items', 'page', 'pageSize', 'total']);
    const sponsor = await o.sponsor.get(`/api/studies/${o.studyId}`);
    expect(JSON.stringify(sponsor.body)).not.toMatch(/ZEPHYRX|QUOLLY/);
  });
});
