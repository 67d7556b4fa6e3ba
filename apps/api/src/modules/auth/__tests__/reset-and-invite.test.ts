import supertest from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createStudy, createTestContext, createUser, signIn, type TestContext } from '../../../test/harness.js';

let t: TestContext;
beforeAll(async () => {
  t = await createTestContext();
});
afterAll(async () => t.close());

async function waitForMail(to: string, subject: RegExp) {
  for (let i = 0; i < 50; i++) {
    const found = (await t.smtp.list()).find((m) => m.to.includes(to) && subject.test(m.subject));
    if (found) return found;
    await new Promise((r) => setTimeout(r, 50));
  }
  throw new Error(`no mail to ${to} matching ${subject}`);
}

const tokenFrom = (text: string) => {
  const m = /token=([\w-]+)/.exec(text);
  if (!m) throw new Error(`no token link in: ${text}`);
  return m[1]!;
};

describe('password reset', () => {
  it('when a user asks for a reset, then a single-use link arrives, works once and old sessions end', async () => {
    const u = await createUser(t);
    const old = await signIn(t, u.email);
    const req = await supertest(t.app).post('/api/auth/password-reset/request').send({ email: u.email });
    expect(req.status).toBe(202);
    const mail = await waitForMail(u.email, /Reset/);
    expect(mail.text).toContain(`${t.env.APP_ORIGIN}/reset-password?token=`);
    const token = tokenFrom(mail.text);

    const first = await supertest(t.app)
      .post('/api/auth/password-reset/confirm')
      .send({ token, password: 'a-brand-new-password' });
    expect(first.status).toBe(204);
    const again = await supertest(t.app)
      .post('/api/auth/password-reset/confirm')
      .send({ token, password: 'yet-another-password' });
    expect(again.status).toBe(400);
    expect(again.body.error.code).toBe('token_invalid');

    expect((await old.get('/api/me')).status).toBe(401);
    await signIn(t, u.email, 'a-brand-new-password');
  });

  it('when the address has no account, then the same 202 answer and no mail', async () => {
    const before = (await t.smtp.list()).length;
    const res = await supertest(t.app).post('/api/auth/password-reset/request').send({ email: 'nobody@test.example' });
    expect(res.status).toBe(202);
    await new Promise((r) => setTimeout(r, 200));
    expect((await t.smtp.list()).length).toBe(before);
  });

  it('when the link has expired, then it is refused and the password is unchanged', async () => {
    const u = await createUser(t);
    await supertest(t.app).post('/api/auth/password-reset/request').send({ email: u.email }).expect(202);
    const token = tokenFrom((await waitForMail(u.email, /Reset/)).text);
    await t.ownerQuery(`UPDATE one_time_token SET expires_at = now() - interval '1 minute' WHERE user_id = $1`, [u.id]);
    const res = await supertest(t.app).post('/api/auth/password-reset/confirm').send({ token, password: 'would-be-new-password' });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('token_invalid');
    await signIn(t, u.email);
  });

  it('when the new password is too short, then 400 with the field named', async () => {
    const res = await supertest(t.app).post('/api/auth/password-reset/confirm').send({ token: 'x'.repeat(43), password: 'short' });
    expect(res.status).toBe(400);
    expect(res.body.error.details.issues[0].path).toEqual(['password']);
  });
});

describe('POST /api/admin/users/invite', () => {
  it('when an admin invites a coordinator, then the invitee gets a link, chooses a password and has the site scope', async () => {
    const study = await createStudy(t);
    const admin = await createUser(t, { isAdmin: true });
    const s = await signIn(t, admin.email);
    const res = await s.post('/api/admin/users/invite').send({
      email: 'Invited.Coordinator@Test.example',
      displayName: 'Invited Coordinator',
      memberships: [{ studyId: study.id, role: 'coordinator', siteIds: [study.siteIds[0]] }],
    });
    expect(res.status).toBe(201);
    expect(res.body.emailSent).toBe(true);
    const mail = await waitForMail('invited.coordinator@test.example', /invited/);
    const token = tokenFrom(mail.text);
    // Not yet usable: no password until the invitation is accepted.
    const early = await supertest(t.app).post('/api/auth/sign-in').send({ email: 'invited.coordinator@test.example', password: 'x' });
    expect(early.status).toBe(401);
    await supertest(t.app)
      .post('/api/auth/invite/accept')
      .send({ token, displayName: 'Ines Coordinator', password: 'invitee-password-1' })
      .expect(204);
    const me = await signIn(t, 'invited.coordinator@test.example', 'invitee-password-1');
    const body = (await me.get('/api/me')).body;
    expect(body.displayName).toBe('Ines Coordinator');
    expect(body.memberships).toEqual([
      { studyId: study.id, studyCode: expect.any(String), role: 'coordinator', siteIds: [study.siteIds[0]] },
    ]);
    const events = await t.ownerQuery<{ action: string }>(
      `SELECT action FROM audit_event WHERE action IN ('user.invited', 'membership.granted', 'user.invite_accepted') ORDER BY seq`,
    );
    expect(events.map((e) => e.action)).toEqual(['user.invited', 'membership.granted', 'user.invite_accepted']);
  });

  it('when the address already has an account, then 409 and nothing new', async () => {
    const admin = await createUser(t, { isAdmin: true });
    const s = await signIn(t, admin.email);
    const res = await s.post('/api/admin/users/invite').send({ email: admin.email, displayName: 'Again' });
    expect(res.status).toBe(409);
  });

  it('when an admin changes roles with a reason, then the change is audited with before/after and sessions end', async () => {
    const study = await createStudy(t);
    const admin = await createUser(t, { isAdmin: true });
    const target = await createUser(t, { memberships: [{ studyId: study.id, role: 'sponsor' }] });
    const targetSession = await signIn(t, target.email);
    const s = await signIn(t, admin.email);
    const noReason = await s.patch(`/api/admin/users/${target.id}`).send({ memberships: [] });
    expect(noReason.status).toBe(400);
    const res = await s
      .patch(`/api/admin/users/${target.id}`)
      .send({ memberships: [{ studyId: study.id, role: 'auditor' }], reason: 'Moved to monitoring' });
    expect(res.status).toBe(200);
    expect(res.body.user.memberships).toEqual([{ studyId: study.id, studyCode: expect.any(String), role: 'auditor', siteIds: [] }]);
    const ev = await t.ownerQuery<{ before: { memberships: { role: string }[] }; after: { memberships: { role: string }[] }; reason: string }>(
      `SELECT before, after, reason FROM audit_event WHERE action = 'user.roles_changed' AND entity_id = $1`,
      [target.id],
    );
    expect(ev[0]!.reason).toBe('Moved to monitoring');
    expect(ev[0]!.before.memberships[0]!.role).toBe('sponsor');
    expect(ev[0]!.after.memberships[0]!.role).toBe('auditor');
    expect((await targetSession.get('/api/me')).status).toBe(401);
  });
});
