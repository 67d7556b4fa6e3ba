import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { inTransaction } from '../../../db/transaction.js';
import {
  auditCount,
  createTestContext,
  createUser,
  signIn,
  superuserQuery,
  type TestContext,
} from '../../../test/harness.js';
import { appendAudit } from '../audit.service.js';
import { verifyAuditChain } from '../audit-verify.js';
import { GENESIS_HASH, auditHash, canonicalJson } from '../audit-hash.js';

let t: TestContext;
beforeAll(async () => {
  t = await createTestContext();
  // A few entries through the real routes, so the chain has something to walk.
  const admin = await createUser(t, { isAdmin: true });
  const s = await signIn(t, admin.email);
  await s.post('/api/admin/users/invite').send({ email: 'new.person@test.example', displayName: 'New Person' }).expect(201);
});
afterAll(async () => t.close());

const actor = { userId: null, email: 'test@counterpoise.local', role: 'system', requestId: 'test' };

function appClient() {
  return new pg.Client({
    host: t.env.DB_HOST,
    port: t.env.DB_PORT,
    user: t.env.DB_APP_USER,
    password: t.env.DB_APP_PASSWORD,
    database: t.database,
  });
}

describe('audit trail storage', () => {
  it('when the application role tries UPDATE, DELETE or TRUNCATE, then PostgreSQL refuses', async () => {
    const c = appClient();
    await c.connect();
    try {
      await expect(c.query(`UPDATE audit_event SET reason = 'x'`)).rejects.toThrow(/permission denied/);
      await expect(c.query(`DELETE FROM audit_event`)).rejects.toThrow(/permission denied/);
      await expect(c.query(`TRUNCATE audit_event`)).rejects.toThrow(/permission denied/);
    } finally {
      await c.end();
    }
  });

  it('when even the table owner tries UPDATE or DELETE, then the trigger refuses', async () => {
    await expect(t.ownerQuery(`UPDATE audit_event SET reason = 'x'`)).rejects.toThrow(/append-only/);
    await expect(t.ownerQuery(`DELETE FROM audit_event`)).rejects.toThrow(/append-only/);
    await expect(t.ownerQuery(`TRUNCATE audit_event`)).rejects.toThrow(/append-only/);
  });

  it('when entries are appended outside a transaction, then it refuses to write', async () => {
    const before = await auditCount(t);
    await expect(appendAudit(t.ctx.ds.manager, actor, [{ action: 'x', entityType: 'y' }])).rejects.toThrow(/transaction/);
    expect(await auditCount(t)).toBe(before);
  });

  it('when a mutation fails midway, then neither its change nor its audit entry remains', async () => {
    const before = await auditCount(t);
    const users = await t.ownerQuery<{ n: number }>(`SELECT count(*)::int AS n FROM app_user`);
    await expect(
      inTransaction(t.ctx.ds, async (tx) => {
        await tx.query(`INSERT INTO app_user (email, display_name, status) VALUES ('half@test.example', 'Half', 'invited')`);
        await appendAudit(tx, actor, [{ action: 'user.invited', entityType: 'user', entityId: 'half' }]);
        throw new Error('boom after the audit entry');
      }),
    ).rejects.toThrow('boom');
    expect(await auditCount(t)).toBe(before);
    const after = await t.ownerQuery<{ n: number }>(`SELECT count(*)::int AS n FROM app_user`);
    expect(after[0]!.n).toBe(users[0]!.n);
  });

  it('when an API mutation fails validation halfway through its checks, then nothing is written', async () => {
    const admin = await createUser(t, { isAdmin: true });
    const s = await signIn(t, admin.email);
    const before = await auditCount(t);
    const res = await s.post('/api/admin/users/invite').send({
      email: 'bad.membership@test.example',
      displayName: 'Bad Membership',
      memberships: [{ studyId: '00000000-0000-4000-8000-000000000000', role: 'sponsor' }],
    });
    expect(res.status).toBe(400);
    expect(await auditCount(t)).toBe(before);
    const rows = await t.ownerQuery(`SELECT 1 FROM app_user WHERE email = 'bad.membership@test.example'`);
    expect(rows).toHaveLength(0);
  });
});

describe('hash chain', () => {
  it('recomputes every stored hash from its content (SHA-256 over canonical JSON, FIPS 180-4)', async () => {
    const result = await verifyAuditChain(t.ctx.ds);
    expect(result.ok).toBe(true);
    expect(result.checked).toBe(await auditCount(t));
    const first = await t.ownerQuery<{ prev_hash: string }>(`SELECT prev_hash FROM audit_event ORDER BY seq LIMIT 1`);
    expect(first[0]!.prev_hash).toBe(GENESIS_HASH);
  });

  it('canonical JSON sorts keys at every level so equal content hashes equal', () => {
    expect(canonicalJson({ b: 1, a: { d: [1, { z: 1, y: 2 }], c: null } })).toBe('{"a":{"c":null,"d":[1,{"y":2,"z":1}]},"b":1}');
    const content = {
      seq: '1', id: 'x', occurredAt: 't', actorId: null, actorEmail: null, actorRole: null, action: 'a',
      entityType: 'e', entityId: null, studyId: null, siteId: null, before: { a: 1, b: 2 }, after: null, reason: null,
      requestId: null, revealsAllocation: false, prevHash: GENESIS_HASH,
    };
    expect(auditHash(content)).toBe(auditHash({ ...content, before: { b: 2, a: 1 } }));
    expect(auditHash(content)).not.toBe(auditHash({ ...content, before: { a: 1, b: 3 } }));
  });

  it('when a superuser alters a row behind the triggers, then verify names that event', async () => {
    const rows = await t.ownerQuery<{ seq: string; id: string }>(
      `SELECT seq::text, id FROM audit_event ORDER BY seq OFFSET 1 LIMIT 1`,
    );
    const target = rows[0]!;
    await superuserQuery(
      t,
      `SET session_replication_role = replica; UPDATE audit_event SET reason = 'quietly changed' WHERE seq = ${Number(target.seq)}; SET session_replication_role = origin;`,
    );
    const api = await signIn(t, (await createUser(t, { isAdmin: true })).email);
    const res = await api.get('/api/audit/verify');
    expect(res.status).toBe(200);
    expect(res.body.ok).toBe(false);
    expect(res.body.firstBroken).toEqual({ seq: Number(target.seq), id: target.id, problem: 'hash_mismatch' });
  });

  it('when a superuser deletes a row, then verify reports the broken link at the next event', async () => {
    const t2 = await createTestContext();
    try {
      await inTransaction(t2.ctx.ds, (tx) =>
        appendAudit(tx, actor, [1, 2, 3, 4].map((i) => ({ action: `test.${i}`, entityType: 'test', entityId: String(i) }))),
      );
      const rows = await t2.ownerQuery<{ seq: string; id: string }>(`SELECT seq::text, id FROM audit_event ORDER BY seq`);
      await superuserQuery(
        t2,
        `SET session_replication_role = replica; DELETE FROM audit_event WHERE seq = ${Number(rows[1]!.seq)}; SET session_replication_role = origin;`,
      );
      const result = await verifyAuditChain(t2.ctx.ds);
      expect(result.ok).toBe(false);
      expect(result.firstBroken).toEqual({ seq: Number(rows[2]!.seq), id: rows[2]!.id, problem: 'chain_broken' });
      expect(result.checked).toBe(1);
    } finally {
      await t2.close();
    }
  });

  it('when many transactions append at once, then the chain stays linked in order', async () => {
    const t3 = await createTestContext();
    try {
      await Promise.all(
        Array.from({ length: 25 }, (_, i) =>
          inTransaction(t3.ctx.ds, (tx) => appendAudit(tx, actor, [{ action: 'test.parallel', entityType: 'test', entityId: String(i) }])),
        ),
      );
      const result = await verifyAuditChain(t3.ctx.ds);
      expect(result).toMatchObject({ ok: true, checked: 25 });
    } finally {
      await t3.close();
    }
  });
});
