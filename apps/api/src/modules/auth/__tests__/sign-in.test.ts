import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import supertest from 'supertest';
import { SignJWT } from 'jose';
import { auditCount, createTestContext, createUser, signIn, TEST_PASSWORD, type TestContext } from '../../../test/harness.js';

let t: TestContext;
beforeAll(async () => {
  t = await createTestContext({ SIGN_IN_MAX_FAILURES: '3' });
});
afterAll(async () => t.close());

describe('POST /api/auth/sign-in', () => {
  it('when the password is right, then a session cookie is set (httpOnly, SameSite=Strict) and the sign-in is audited', async () => {
    const u = await createUser(t);
    const before = await auditCount(t);
    const res = await supertest(t.app).post('/api/auth/sign-in').send({ email: u.email.toUpperCase(), password: TEST_PASSWORD });
    expect(res.status).toBe(200);
    expect(res.body.me.email).toBe(u.email);
    const cookie = String(res.headers['set-cookie']);
    expect(cookie).toMatch(/cp_session=/);
    expect(cookie).toMatch(/HttpOnly/);
    expect(cookie).toMatch(/SameSite=Strict/);
    const events = await t.ownerQuery<{ action: string; actor_id: string }>(
      `SELECT action, actor_id FROM audit_event WHERE seq > (SELECT max(seq) - 1 FROM audit_event)`,
    );
    expect(await auditCount(t)).toBe(before + 1);
    expect(events[0]).toEqual({ action: 'auth.sign_in', actor_id: u.id });
  });

  it('when the password is wrong or the user unknown, then the same 401 message and a failure entry', async () => {
    const u = await createUser(t);
    const wrong = await supertest(t.app).post('/api/auth/sign-in').send({ email: u.email, password: 'nope-nope-nope' });
    const unknown = await supertest(t.app).post('/api/auth/sign-in').send({ email: 'ghost@test.example', password: 'x' });
    expect(wrong.status).toBe(401);
    expect(unknown.status).toBe(401);
    expect(wrong.body.error.code).toBe('invalid_credentials');
    expect(unknown.body.error).toEqual(wrong.body.error);
    const fails = await t.ownerQuery<{ n: number }>(
      `SELECT count(*)::int AS n FROM audit_event WHERE action = 'auth.sign_in_failed' AND entity_id = ANY($1)`,
      [[u.email, 'ghost@test.example']],
    );
    expect(fails[0]!.n).toBe(2);
  });

  it('when the body is not valid, then 400 validation_failed with field issues', async () => {
    const res = await supertest(t.app).post('/api/auth/sign-in').send({ email: 'not-an-email' });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('validation_failed');
    const paths = res.body.error.details.issues.map((i: { path: string[] }) => i.path.join('.'));
    expect(paths).toEqual(expect.arrayContaining(['email', 'password']));
  });

  it('when failures reach the limit, then 429 even with the right password', async () => {
    const u = await createUser(t);
    for (let i = 0; i < 3; i++) {
      const r = await supertest(t.app).post('/api/auth/sign-in').send({ email: u.email, password: 'wrong-wrong-wrong' });
      expect(r.status).toBe(401);
    }
    const res = await supertest(t.app).post('/api/auth/sign-in').send({ email: u.email, password: TEST_PASSWORD });
    expect(res.status).toBe(429);
    expect(res.body.error.code).toBe('rate_limited');
  });
});

describe('session tokens and CSRF', () => {
  it('when the token is forged with another key, then /api/me answers 401', async () => {
    const u = await createUser(t);
    const forged = await new SignJWT({ sid: '00000000-0000-4000-8000-000000000000' })
      .setProtectedHeader({ alg: 'HS256' })
      .setSubject(u.id)
      .setIssuer('counterpoise')
      .setExpirationTime('1h')
      .sign(new TextEncoder().encode('some-other-secret-of-enough-length-123'));
    const res = await supertest(t.app).get('/api/me').set('Cookie', `cp_session=${forged}`);
    expect(res.status).toBe(401);
    expect(res.body.error.code).toBe('unauthenticated');
  });

  it('when the session has expired, then 401', async () => {
    const u = await createUser(t);
    const s = await signIn(t, u.email);
    await t.ownerQuery(`UPDATE user_session SET expires_at = now() - interval '1 second' WHERE user_id = $1`, [u.id]);
    const res = await s.get('/api/me');
    expect(res.status).toBe(401);
  });

  it('when an unsafe request lacks the CSRF token, then 403 csrf_failed and the session stays open', async () => {
    const u = await createUser(t);
    const s = await signIn(t, u.email);
    const res = await s.agent.post('/api/auth/sign-out');
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe('csrf_failed');
    expect((await s.get('/api/me')).status).toBe(200);
  });

  it('when signing out with the token, then the session ends for good', async () => {
    const u = await createUser(t);
    const s = await signIn(t, u.email);
    const cookie = (await s.get('/api/me')).status;
    expect(cookie).toBe(200);
    expect((await s.post('/api/auth/sign-out')).status).toBe(204);
    const revoked = await t.ownerQuery<{ n: number }>(
      `SELECT count(*)::int AS n FROM user_session WHERE user_id = $1 AND revoked_at IS NOT NULL`,
      [u.id],
    );
    expect(revoked[0]!.n).toBe(1);
    expect((await s.get('/api/me')).status).toBe(401);
  });
});
