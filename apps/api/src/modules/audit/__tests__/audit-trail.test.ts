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
import { PENDING_ROW_MAX, appendAudit } from '../audit.service.js';
import { verifyAuditChain } from '../audit-verify.js';
import { GENESIS_HASH, auditHash, canonicalJson, chainHash, contentHash } from '../audit-hash.js';
import { createHash } from 'node:crypto';

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
  it('recomputes every stored hash from its content and link (SHA-256, FIPS 180-4, over canonical JSON)', async () => {
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

  it('links every append at commit in PostgreSQL, a large one over several pending rows, in the order appended (scheme 2)', async () => {
    const t4 = await createTestContext();
    try {
      const many = PENDING_ROW_MAX + 3;
      await inTransaction(t4.ctx.ds, (tx) => appendAudit(tx, actor, [{ action: 'test.small', entityType: 'test', before: { a: 1.5, b: [true, null] } }]));
      await inTransaction(t4.ctx.ds, (tx) =>
        appendAudit(tx, actor, Array.from({ length: many }, (_, i) => ({ action: 'test.large', entityType: 'test', entityId: String(i), after: { i, third: i / 3, nested: { b: [true, null], s: 'ünï "q"' } } }))),
      );
      // A small and a large append in one transaction: linked in that order.
      await inTransaction(t4.ctx.ds, async (tx) => {
        await appendAudit(tx, actor, [{ action: 'test.mixed_small', entityType: 'test' }]);
        await appendAudit(tx, actor, Array.from({ length: many }, () => ({ action: 'test.mixed_large', entityType: 'test' })));
      });
      const rows = await t4.ownerQuery<{ seq: string; action: string; hash_scheme: number; at: string; prev_hash: string; hash: string; content_hash: string }>(
        `SELECT seq::text, action, hash_scheme, to_char(occurred_at AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"') AS at,
                prev_hash, hash, content_hash FROM audit_event ORDER BY audit_event.seq`,
      );
      expect(rows).toHaveLength(1 + 2 * many + 1);
      expect(rows.every((r) => r.hash_scheme === 2)).toBe(true);
      expect(rows.map((r) => r.action)).toEqual([
        'test.small',
        ...Array.from({ length: many }, () => 'test.large'),
        'test.mixed_small',
        ...Array.from({ length: many }, () => 'test.mixed_large'),
      ]);
      const large = await t4.ownerQuery<{ entity_id: string }>(
        `SELECT entity_id FROM audit_event WHERE action = 'test.large' ORDER BY audit_event.seq`,
      );
      expect(large.map((r) => r.entity_id)).toEqual(Array.from({ length: many }, (_, i) => String(i)));
      expect(await t4.ownerQuery(`SELECT * FROM audit_pending`)).toHaveLength(0);
      // Scheme 2 from its published parts, SHA-256 (FIPS 180-4) via node:crypto, not via chainHash.
      const first = rows[0]!;
      const direct = createHash('sha256').update(`counterpoise-audit-2|${GENESIS_HASH}|${first.seq}|${first.at}|${first.content_hash}`).digest('hex');
      expect(first.hash).toBe(direct);
      expect(chainHash(GENESIS_HASH, first.seq, first.at, first.content_hash)).toBe(direct);
      expect(await verifyAuditChain(t4.ctx.ds)).toMatchObject({ ok: true, checked: rows.length });
    } finally {
      await t4.close();
    }
  });

  it('when scheme-1 events precede scheme-2 events, then both verify and tampering with either is found', async () => {
    const t5 = await createTestContext();
    try {
      // A scheme-1 event as the API wrote them before the commit-time seal.
      const content = {
        seq: '1', id: '00000000-0000-4000-8000-000000000001', occurredAt: '2026-11-30T10:00:00.000001Z', actorId: null,
        actorEmail: 'old@counterpoise.local', actorRole: 'system', action: 'test.old', entityType: 'test', entityId: null,
        studyId: null, siteId: null, before: null, after: { n: 1 }, reason: null, requestId: null, revealsAllocation: false,
        prevHash: GENESIS_HASH,
      };
      await superuserQuery(
        t5,
        `SELECT setval(pg_get_serial_sequence('audit_event', 'seq'), 1);
         INSERT INTO audit_event (seq, id, occurred_at, actor_email, actor_role, action, entity_type, after, reveals_allocation, prev_hash, hash, hash_scheme)
         VALUES (1, '${content.id}', '${content.occurredAt}', 'old@counterpoise.local', 'system', 'test.old', 'test', '{"n":1}', false,
                 '${GENESIS_HASH}', '${auditHash(content)}', 1)`,
      );
      await inTransaction(t5.ctx.ds, (tx) => appendAudit(tx, actor, [{ action: 'test.new', entityType: 'test' }]));
      const rows = await t5.ownerQuery<{ seq: string; id: string; hash_scheme: number; prev_hash: string }>(
        `SELECT seq::text, id, hash_scheme, prev_hash FROM audit_event ORDER BY audit_event.seq`,
      );
      expect(rows.map((r) => r.hash_scheme)).toEqual([1, 2]);
      expect(rows[1]!.prev_hash).toBe(auditHash(content));
      expect(await verifyAuditChain(t5.ctx.ds)).toMatchObject({ ok: true, checked: 2 });
      // A change to a scheme-2 event's content, even with its stored content hash recomputed to match.
      const forged = contentHash({ ...content, id: rows[1]!.id, action: 'test.forged', actorEmail: actor.email, actorRole: actor.role, after: null, requestId: actor.requestId });
      await superuserQuery(
        t5,
        `SET session_replication_role = replica; UPDATE audit_event SET action = 'test.forged', content_hash = '${forged}' WHERE seq = ${Number(rows[1]!.seq)}; SET session_replication_role = origin;`,
      );
      expect((await verifyAuditChain(t5.ctx.ds)).firstBroken).toEqual({ seq: Number(rows[1]!.seq), id: rows[1]!.id, problem: 'hash_mismatch' });
      // Relabelling a scheme-2 event as scheme 1 does not pass either.
      await superuserQuery(
        t5,
        `SET session_replication_role = replica; UPDATE audit_event SET action = 'test.new', hash_scheme = 1 WHERE seq = ${Number(rows[1]!.seq)}; SET session_replication_role = origin;`,
      );
      expect((await verifyAuditChain(t5.ctx.ds)).firstBroken?.problem).toBe('hash_mismatch');
    } finally {
      await t5.close();
    }
  });

  it('when a long transaction has appended entries but not committed, then other transactions still commit theirs meanwhile', async () => {
    const t6 = await createTestContext();
    try {
      let release!: () => void;
      const gate = new Promise<void>((resolve) => (release = resolve));
      let appended!: () => void;
      const longAppended = new Promise<void>((resolve) => (appended = resolve));
      const long = inTransaction(t6.ctx.ds, async (tx) => {
        await appendAudit(tx, actor, Array.from({ length: 50 }, () => ({ action: 'test.long', entityType: 'test' })));
        appended();
        await gate;
      });
      await longAppended;
      // Would wait for the long transaction (and time out) if appending took the chain lock.
      await inTransaction(t6.ctx.ds, (tx) => appendAudit(tx, actor, [{ action: 'test.quick', entityType: 'test' }]));
      const meanwhile = await t6.ownerQuery<{ action: string }>(`SELECT action FROM audit_event`);
      expect(meanwhile.map((r) => r.action)).toEqual(['test.quick']);
      release();
      await long;
      const rows = await t6.ownerQuery<{ action: string }>(`SELECT action FROM audit_event ORDER BY audit_event.seq`);
      expect(rows.map((r) => r.action)).toEqual(['test.quick', ...Array.from({ length: 50 }, () => 'test.long')]);
      expect(await verifyAuditChain(t6.ctx.ds)).toMatchObject({ ok: true, checked: 51 });
    } finally {
      await t6.close();
    }
  });

  it('when a transaction rolls back, then its pending entries leave nothing behind', async () => {
    const before = await auditCount(t);
    await expect(
      inTransaction(t.ctx.ds, async (tx) => {
        await appendAudit(tx, actor, [{ action: 'test.rolled_back', entityType: 'test' }]);
        throw new Error('stop');
      }),
    ).rejects.toThrow('stop');
    expect(await auditCount(t)).toBe(before);
    expect(await t.ownerQuery(`SELECT * FROM audit_pending`)).toHaveLength(0);
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
