import type supertest from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, type SignedInAgent, type TestContext } from '../../../test/harness.js';
import { castStudy, counts, daysAgo, enrollBody, trialDesign, type Cast } from './fixtures.js';

/**
 * Every route of design, enrollment, import and uploads × every role. The participant and
 * the consent document belong to site S1; "coordinator" works at S1, "otherCoordinator" at S2.
 * Refused calls must write nothing: rows and audit entries are counted before and after.
 */
type Role = 'admin' | 'coordinator' | 'otherCoordinator' | 'statistician' | 'sponsor' | 'auditor';
const ROLES: Role[] = ['admin', 'coordinator', 'otherCoordinator', 'statistician', 'sponsor', 'auditor'];

let t: TestContext;
let c: Cast;
let pid: string;
let docId: string;
let n = 0;
const PDF = Buffer.from('%PDF-1.4\n%%EOF\n');
const csvFile = () => {
  const d = daysAgo(2);
  n++;
  return Buffer.from(
    `participant_ref,site,enrollment_date,consent_date,consent_version,age,age_date,fev1_pct,fev1_pct_date,sex,sex_date,smoker,smoker_date,pregnant\n` +
      `MATRIX-${n},S1,${d},${d},1,50,${d},50.0,${d},male,${d},no,${d},no\n`,
  );
};

type Route = { name: string; call: (a: SignedInAgent) => supertest.Test; expect: Record<Role, number> };
const routes = (): Route[] => [
  { name: 'POST /studies', call: (a) => a.post('/api/studies').send({ code: `M${++n}`, title: 'Matrix study', kind: 'randomized_trial', blinding: 'blinded', targetSampleSize: 50 }),
    expect: { admin: 201, coordinator: 403, otherCoordinator: 403, statistician: 201, sponsor: 403, auditor: 403 } },
  { name: 'GET /studies/:studyId', call: (a) => a.get(`/api/studies/${c.studyId}`),
    expect: { admin: 200, coordinator: 200, otherCoordinator: 200, statistician: 200, sponsor: 200, auditor: 200 } },
  { name: 'PUT /studies/:studyId/design', call: (a) => a.put(`/api/studies/${c.studyId}/design`).send({ ...trialDesign(), reason: 'Role matrix re-save' }),
    expect: { admin: 200, coordinator: 403, otherCoordinator: 403, statistician: 200, sponsor: 403, auditor: 403 } },
  { name: 'POST /studies/:studyId/screenings', call: (a) => a.post(`/api/studies/${c.studyId}/screenings`).send({ siteId: c.siteIds[0], answers: { age: 50, pregnant: false } }),
    expect: { admin: 403, coordinator: 201, otherCoordinator: 403, statistician: 403, sponsor: 403, auditor: 403 } },
  { name: 'GET /studies/:studyId/screenings', call: (a) => a.get(`/api/studies/${c.studyId}/screenings`),
    expect: { admin: 403, coordinator: 200, otherCoordinator: 200, statistician: 200, sponsor: 403, auditor: 200 } },
  { name: 'POST /studies/:studyId/participants', call: (a) => a.post(`/api/studies/${c.studyId}/participants`).send(enrollBody(c.siteIds[0]!)),
    expect: { admin: 403, coordinator: 201, otherCoordinator: 403, statistician: 403, sponsor: 403, auditor: 403 } },
  { name: 'GET /studies/:studyId/participants', call: (a) => a.get(`/api/studies/${c.studyId}/participants`),
    expect: { admin: 403, coordinator: 200, otherCoordinator: 200, statistician: 200, sponsor: 403, auditor: 200 } },
  { name: 'GET /studies/:studyId/participants/:participantId', call: (a) => a.get(`/api/studies/${c.studyId}/participants/${pid}`),
    expect: { admin: 403, coordinator: 200, otherCoordinator: 404, statistician: 200, sponsor: 403, auditor: 200 } },
  { name: 'PATCH /studies/:studyId/participants/:participantId', call: (a) => a.patch(`/api/studies/${c.studyId}/participants/${pid}`).send({ action: 'correct', reason: 'Matrix correction', baseline: { age: { value: 50 + (++n % 30), measuredOn: daysAgo(3) } } }),
    expect: { admin: 403, coordinator: 200, otherCoordinator: 403, statistician: 403, sponsor: 403, auditor: 403 } },
  { name: 'POST /studies/:studyId/participants/:participantId/unblind', call: (a) => a.post(`/api/studies/${c.studyId}/participants/${pid}/unblind`).send({ reason: 'Matrix emergency' }),
    expect: { admin: 403, coordinator: 200, otherCoordinator: 403, statistician: 200, sponsor: 403, auditor: 403 } },
  { name: 'GET /studies/:studyId/allocation-list', call: (a) => a.get(`/api/studies/${c.studyId}/allocation-list`),
    expect: { admin: 403, coordinator: 403, otherCoordinator: 403, statistician: 200, sponsor: 403, auditor: 403 } },
  // The other site's coordinator may import, but not rows of S1: the row is refused (400) and nothing is written.
  { name: 'POST /studies/:studyId/participants/import', call: (a) => a.post(`/api/studies/${c.studyId}/participants/import?mode=commit`).attach('file', csvFile(), 'm.csv'),
    expect: { admin: 403, coordinator: 201, otherCoordinator: 400, statistician: 403, sponsor: 403, auditor: 403 } },
  { name: 'GET /studies/:studyId/participants/import/progress/:progressId', call: (a) => a.get(`/api/studies/${c.studyId}/participants/import/progress/none-such-id`),
    expect: { admin: 403, coordinator: 404, otherCoordinator: 404, statistician: 403, sponsor: 403, auditor: 403 } },
  { name: 'GET /studies/:studyId/participants/export.csv', call: (a) => a.get(`/api/studies/${c.studyId}/participants/export.csv`),
    expect: { admin: 403, coordinator: 200, otherCoordinator: 200, statistician: 200, sponsor: 403, auditor: 200 } },
  { name: 'POST /studies/:studyId/participants/:participantId/consent', call: (a) => a.post(`/api/studies/${c.studyId}/participants/${pid}/consent`).attach('file', PDF, 'c.pdf'),
    expect: { admin: 403, coordinator: 201, otherCoordinator: 403, statistician: 403, sponsor: 403, auditor: 403 } },
  { name: 'GET /studies/:studyId/participants/:participantId/consent/:documentId', call: (a) => a.get(`/api/studies/${c.studyId}/participants/${pid}/consent/${docId}`),
    expect: { admin: 403, coordinator: 200, otherCoordinator: 404, statistician: 200, sponsor: 403, auditor: 200 } },
];

beforeAll(async () => {
  t = await createTestContext();
  c = await castStudy(t);
  pid = (await c.coordinator.post(`/api/studies/${c.studyId}/participants`).send(enrollBody(c.siteIds[0]!))).body.participant.id;
  docId = (await c.coordinator.post(`/api/studies/${c.studyId}/participants/${pid}/consent`).attach('file', PDF, 'c.pdf')).body.document.id;
});
afterAll(async () => t.close());

const cases = routes().flatMap((r) => ROLES.map((role) => ({ route: r.name, role, status: r.expect[role] })));

describe('role matrix', () => {
  it.each(cases)('$route as $role → $status', async ({ route, role, status }) => {
    const r = routes().find((x) => x.name === route)!;
    const before = await counts(t);
    const res = await r.call(c[role]);
    expect(res.status, JSON.stringify(res.body).slice(0, 300)).toBe(status);
    if (status >= 400) {
      expect(res.body.error.code).toBeTypeOf('string');
      expect(await counts(t)).toEqual(before);
    }
  });

  it('a user of no study gets 404 on every study route and writes nothing', async () => {
    const { createUser, signIn } = await import('../../../test/harness.js');
    const u = await createUser(t);
    const a = await signIn(t, u.email);
    const before = await counts(t);
    for (const r of routes().filter((x) => x.name !== 'POST /studies')) {
      const res = await r.call(a);
      expect(res.status, r.name).toBe(404);
    }
    expect(await counts(t)).toEqual(before);
  });

  it('a signed-out caller gets 401 or 403 everywhere and writes nothing', async () => {
    const supertestMod = await import('supertest');
    const anon = supertestMod.default(t.app);
    const before = await counts(t);
    const fake = { get: (u: string) => anon.get(u), post: (u: string) => anon.post(u), put: (u: string) => anon.put(u), patch: (u: string) => anon.patch(u) } as unknown as SignedInAgent;
    for (const r of routes()) {
      const res = await r.call(fake);
      expect([401, 403], r.name).toContain(res.status);
    }
    expect(await counts(t)).toEqual(before);
  });
});
