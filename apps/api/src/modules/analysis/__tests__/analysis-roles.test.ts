import { lockSignatureMeaning } from '@counterpoise/contracts/analysis';
import supertest from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditCount, createTestContext, TEST_PASSWORD, type SignedInAgent, type TestContext } from '../../../test/harness.js';
import { baseSpec, castAnalysisStudy, daysAgo, type Cast } from './analysis-fixtures.js';

let t: TestContext;
let c: Cast;
let runId: string;

type Who = 'admin' | 'coordinator' | 'otherCoordinator' | 'statistician' | 'sponsor' | 'auditor' | 'anonymous';
const everyone: Who[] = ['admin', 'coordinator', 'otherCoordinator', 'statistician', 'sponsor', 'auditor', 'anonymous'];

beforeAll(async () => {
  t = await createTestContext();
  c = await castAnalysisStudy(t, { n: 24 });
  await c.statistician.put(`/api/studies/${c.studyId}/analysis/spec`).send({ spec: baseSpec() });
  await c.statistician.put(`/api/studies/${c.studyId}/outcomes`).send({
    outcomeKey: 'walk_final',
    rows: c.participants.map((p) => ({ participantCode: p.code, value: Math.round(p.outcome), measuredOn: daysAgo(5) })),
  });
  const run = await c.statistician.post(`/api/studies/${c.studyId}/analysis/runs`).send({ reason: 'Dry run before lock' });
  runId = run.body.run.id;
});
afterAll(async () => {
  await t.close();
});

function agent(who: Who): SignedInAgent | null {
  return who === 'anonymous' ? null : c[who];
}

/** Participant at site S1 (the coordinator's) and one at S2 (the other coordinator's). */
const s1 = () => c.participants.find((p) => p.site === 0)!;

type Case = {
  name: string;
  method: 'get' | 'put' | 'post';
  path: () => string;
  body?: () => object;
  /** Expected status per role; everyone else 403 (anonymous 401). */
  allowed: Partial<Record<Who, number>>;
  writes: boolean;
};

const cases: Case[] = [
  { name: 'GET analysis/spec', method: 'get', path: () => `/api/studies/${c.studyId}/analysis/spec`, allowed: { statistician: 200 }, writes: false },
  {
    name: 'PUT analysis/spec',
    method: 'put',
    path: () => `/api/studies/${c.studyId}/analysis/spec`,
    body: () => ({ spec: baseSpec({ alpha: 0.04 }), reason: 'Role matrix edit' }),
    allowed: { statistician: 200 },
    writes: true,
  },
  {
    name: 'POST analysis/spec/lock',
    method: 'post',
    path: () => `/api/studies/${c.studyId}/analysis/spec/lock`,
    body: () => ({ version: 1, password: TEST_PASSWORD, meaning: lockSignatureMeaning }),
    allowed: { statistician: 200 },
    writes: true,
  },
  {
    name: 'PUT outcomes (a participant of site S1)',
    method: 'put',
    path: () => `/api/studies/${c.studyId}/outcomes`,
    body: () => ({ outcomeKey: 'walk_final', rows: [{ participantCode: s1().code, value: 300 + Math.random(), measuredOn: daysAgo(4) }], reason: 'Role matrix correction' }),
    allowed: { statistician: 200, coordinator: 200 },
    writes: true,
  },
  {
    name: 'GET outcomes',
    method: 'get',
    path: () => `/api/studies/${c.studyId}/outcomes`,
    allowed: { statistician: 200, coordinator: 200, otherCoordinator: 200 },
    writes: false,
  },
  {
    name: 'POST outcomes/check (a participant of site S1)',
    method: 'post',
    path: () => `/api/studies/${c.studyId}/outcomes/check`,
    body: () => ({ outcomeKey: 'walk_final', rows: [{ participantCode: s1().code, value: 299.5, measuredOn: daysAgo(4) }] }),
    allowed: { statistician: 200, coordinator: 200 },
    writes: false,
  },
  {
    name: 'POST analysis/runs',
    method: 'post',
    path: () => `/api/studies/${c.studyId}/analysis/runs`,
    body: () => ({ reason: 'Role matrix run' }),
    allowed: { statistician: 201 },
    writes: true,
  },
  { name: 'GET analysis/runs', method: 'get', path: () => `/api/studies/${c.studyId}/analysis/runs`, allowed: { statistician: 200 }, writes: false },
  { name: 'GET analysis/runs/:runId', method: 'get', path: () => `/api/studies/${c.studyId}/analysis/runs/${runId}`, allowed: { statistician: 200 }, writes: false },
];

describe('analysis routes: role matrix', () => {
  for (const row of cases) {
    for (const who of everyone) {
      const expected = row.allowed[who] ?? (who === 'anonymous' ? 401 : 403);
      it(`${row.name} as ${who} answers ${expected}${expected >= 400 && row.writes ? ' and writes nothing' : ''}`, async () => {
        const a = agent(who);
        const before = await auditCount(t);
        const specsBefore = await t.ownerQuery<{ n: number }>(`SELECT (SELECT count(*) FROM analysis_spec)::int + (SELECT count(*) FROM analysis_run)::int AS n`);
        const outcomesBefore = await t.ownerQuery<{ s: string }>(`SELECT coalesce(string_agg(value::text || measured_on::text, ',' ORDER BY participant_id), '') AS s FROM outcome_value`);
        const send = (r: supertest.Test) => (row.body ? r.send(row.body()) : r);
        const res = a
          ? await send(a[row.method](row.path()))
          : await send(supertest(t.app)[row.method](row.path()));
        expect(res.status, JSON.stringify(res.body)).toBe(expected);
        if (expected >= 400) {
          expect(res.body.error.code).toBe(expected === 401 ? 'unauthenticated' : 'forbidden');
          expect(await auditCount(t)).toBe(before);
          expect(await t.ownerQuery(`SELECT (SELECT count(*) FROM analysis_spec)::int + (SELECT count(*) FROM analysis_run)::int AS n`)).toEqual(specsBefore);
          expect(await t.ownerQuery(`SELECT coalesce(string_agg(value::text || measured_on::text, ',' ORDER BY participant_id), '') AS s FROM outcome_value`)).toEqual(outcomesBefore);
        } else if (row.writes) {
          expect(await auditCount(t)).toBeGreaterThan(before);
        } else {
          expect(await auditCount(t)).toBe(before);
          expect(await t.ownerQuery(`SELECT coalesce(string_agg(value::text || measured_on::text, ',' ORDER BY participant_id), '') AS s FROM outcome_value`)).toEqual(outcomesBefore);
        }
      });
    }
  }

  it('when a coordinator records outcomes, then the answer carries no arm', async () => {
    const res = await c.coordinator
      .put(`/api/studies/${c.studyId}/outcomes`)
      .send({ outcomeKey: 'walk_final', rows: [{ participantCode: s1().code, value: 301.5, measuredOn: daysAgo(3) }], reason: 'Blinded check' });
    expect(res.status).toBe(200);
    const text = JSON.stringify(res.body);
    for (const armId of c.armIds) expect(text).not.toContain(armId);
    expect(text).not.toMatch(/HBW|"UC"/);
    const [audit] = await t.ownerQuery<{ after: object; reveals_allocation: boolean }>(
      `SELECT after, reveals_allocation FROM audit_event WHERE action = 'outcome.corrected' ORDER BY seq DESC LIMIT 1`,
    );
    expect(audit!.reveals_allocation).toBe(false);
    expect(JSON.stringify(audit!.after)).not.toMatch(/HBW|UC|arm/i);
  });
});

describe('GET /api/openapi.json', () => {
  it('lists every analysis operation', async () => {
    const res = await supertest(t.app).get('/api/openapi.json');
    const paths = res.body.paths as Record<string, Record<string, unknown>>;
    const listed = Object.entries(paths).flatMap(([p, ops]) => Object.keys(ops).map((m) => `${m} ${p}`));
    expect(listed).toEqual(
      expect.arrayContaining([
        'get /api/studies/{studyId}/analysis/spec',
        'put /api/studies/{studyId}/analysis/spec',
        'post /api/studies/{studyId}/analysis/spec/lock',
        'get /api/studies/{studyId}/outcomes',
        'post /api/studies/{studyId}/outcomes/check',
        'put /api/studies/{studyId}/outcomes',
        'post /api/studies/{studyId}/analysis/runs',
        'get /api/studies/{studyId}/analysis/runs',
        'get /api/studies/{studyId}/analysis/runs/{runId}',
      ]),
    );
  });
});
