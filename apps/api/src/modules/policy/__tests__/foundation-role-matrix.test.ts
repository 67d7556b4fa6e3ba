import supertest from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  auditCount,
  createStudy,
  createUser,
  createTestContext,
  signIn,
  type SignedInAgent,
  type TestContext,
} from '../../../test/harness.js';

/**
 * Every foundation route for every role (and a coordinator of another site, and no session):
 * the status the policy module must give, and for refused calls, that nothing was written.
 */
type Who = 'anonymous' | 'admin' | 'coordinator' | 'otherSiteCoordinator' | 'statistician' | 'sponsor' | 'auditor';
const everyone: Who[] = ['anonymous', 'admin', 'coordinator', 'otherSiteCoordinator', 'statistician', 'sponsor', 'auditor'];

let t: TestContext;
let study: { id: string; siteIds: string[] };
let targetUserId: string;
const agents = {} as Record<Exclude<Who, 'anonymous'>, SignedInAgent>;

beforeAll(async () => {
  t = await createTestContext();
  study = await createStudy(t, { sites: ['N1', 'N2'] });
  const m = (role: 'coordinator' | 'statistician' | 'sponsor' | 'auditor', siteIds: string[] = []) => ({
    memberships: [{ studyId: study.id, role, siteIds }],
  });
  const users = {
    admin: await createUser(t, { isAdmin: true }),
    coordinator: await createUser(t, m('coordinator', [study.siteIds[0]!])),
    otherSiteCoordinator: await createUser(t, m('coordinator', [study.siteIds[1]!])),
    statistician: await createUser(t, m('statistician')),
    sponsor: await createUser(t, m('sponsor')),
    auditor: await createUser(t, m('auditor')),
  };
  targetUserId = (await createUser(t, m('sponsor'))).id;
  for (const [who, u] of Object.entries(users)) agents[who as keyof typeof agents] = await signIn(t, u.email);
});
afterAll(async () => t.close());

type Row = {
  route: string;
  call: (a: SignedInAgent | null) => supertest.Test;
  allowed: Partial<Record<Who, number>>;
  mutates?: boolean;
};

const anon = () => supertest(t.app);
const rows: Row[] = [
  { route: 'GET /api/health', call: (a) => (a ? a.get('/api/health') : anon().get('/api/health')), allowed: Object.fromEntries(everyone.map((w) => [w, 200])) },
  { route: 'GET /api/openapi.json', call: (a) => (a ? a.get('/api/openapi.json') : anon().get('/api/openapi.json')), allowed: Object.fromEntries(everyone.map((w) => [w, 200])) },
  { route: 'GET /api/me', call: (a) => (a ? a.get('/api/me') : anon().get('/api/me')), allowed: { admin: 200, coordinator: 200, otherSiteCoordinator: 200, statistician: 200, sponsor: 200, auditor: 200 } },
  { route: 'GET /api/studies', call: (a) => (a ? a.get('/api/studies') : anon().get('/api/studies')), allowed: { admin: 200, coordinator: 200, otherSiteCoordinator: 200, statistician: 200, sponsor: 200, auditor: 200 } },
  {
    route: 'GET /api/studies/:studyId/sites',
    call: (a) => (a ? a.get(`/api/studies/${study.id}/sites`) : anon().get(`/api/studies/${study.id}/sites`)),
    allowed: { admin: 200, coordinator: 200, otherSiteCoordinator: 200, statistician: 200, sponsor: 200, auditor: 200 },
  },
  { route: 'GET /api/admin/users', call: (a) => (a ? a.get('/api/admin/users') : anon().get('/api/admin/users')), allowed: { admin: 200 } },
  {
    route: 'POST /api/admin/users/invite',
    call: (a) => {
      const payload = { email: `matrix-${Math.random().toString(36).slice(2)}@test.example`, displayName: 'Matrix Invitee' };
      return a ? a.post('/api/admin/users/invite').send(payload) : anon().post('/api/admin/users/invite').send(payload);
    },
    allowed: { admin: 201 },
    mutates: true,
  },
  {
    route: 'PATCH /api/admin/users/:userId',
    call: (a) => {
      const payload = { memberships: [{ studyId: study.id, role: 'sponsor' }], reason: 'Role matrix check' };
      return a ? a.patch(`/api/admin/users/${targetUserId}`).send(payload) : anon().patch(`/api/admin/users/${targetUserId}`).send(payload);
    },
    allowed: { admin: 200 },
    mutates: true,
  },
  { route: 'GET /api/admin/outbox', call: (a) => (a ? a.get('/api/admin/outbox') : anon().get('/api/admin/outbox')), allowed: { admin: 200 } },
  { route: 'GET /api/audit', call: (a) => (a ? a.get('/api/audit') : anon().get('/api/audit')), allowed: { admin: 200, statistician: 200, auditor: 200 } },
  { route: 'GET /api/audit/verify', call: (a) => (a ? a.get('/api/audit/verify') : anon().get('/api/audit/verify')), allowed: { admin: 200, statistician: 200, auditor: 200 } },
  { route: 'GET /api/audit/export.csv', call: (a) => (a ? a.get('/api/audit/export.csv') : anon().get('/api/audit/export.csv')), allowed: { admin: 200, statistician: 200, auditor: 200 } },
];

describe('foundation role matrix', () => {
  for (const row of rows) {
    for (const who of everyone) {
      const expected = row.allowed[who] ?? (who === 'anonymous' ? 401 : 403);
      it(`${row.route} as ${who} → ${expected}`, async () => {
        const before = await auditCount(t);
        const res = await row.call(who === 'anonymous' ? null : agents[who]);
        expect(res.status, JSON.stringify(res.body)).toBe(expected);
        if (expected >= 400) {
          expect(res.body.error.code).toBe(expected === 401 ? 'unauthenticated' : 'forbidden');
          if (row.mutates) expect(await auditCount(t)).toBe(before);
        }
      });
    }
  }

  it('a coordinator sees only the sites of their own scope', async () => {
    const own = await agents.coordinator.get(`/api/studies/${study.id}/sites`);
    expect(own.body.sites.map((s: { id: string }) => s.id)).toEqual([study.siteIds[0]]);
    const stat = await agents.statistician.get(`/api/studies/${study.id}/sites`);
    expect(stat.body.sites).toHaveLength(2);
  });

  it('a user who is not a member of a study gets 404 for it, so study ids cannot be probed', async () => {
    const other = await createStudy(t);
    const res = await agents.statistician.get(`/api/studies/${other.id}/sites`);
    expect(res.status).toBe(404);
  });

  it('the study list carries the permissions the web uses to decide what to show', async () => {
    const sponsor = (await agents.sponsor.get('/api/studies')).body.studies[0];
    expect(sponsor.permissions).toContain('balance.pooled');
    expect(sponsor.permissions).not.toContain('balance.arms');
    expect(sponsor.unblinded).toBe(false);
    const stat = (await agents.statistician.get('/api/studies')).body.studies[0];
    expect(stat.permissions).toContain('balance.arms');
    expect(stat.unblinded).toBe(true);
  });

  it('an admin cannot take away their own administrator access', async () => {
    const me = (await agents.admin.get('/api/me')).body;
    const res = await agents.admin.patch(`/api/admin/users/${me.id}`).send({ isAdmin: false, reason: 'oops' });
    expect(res.status).toBe(409);
  });
});
