import { randomUUID } from 'node:crypto';
import type { EntityManager } from 'typeorm';
import { AppError } from '../../http/app-error.js';
import { GENESIS_HASH, auditHash, type HashedAuditContent } from './audit-hash.js';

/** Who is acting, carried from the request into every audit entry. */
export type AuditActor = {
  userId: string | null;
  email: string | null;
  role: string | null;
  requestId: string | null;
};

export type AuditEntry = {
  action: string;
  entityType: string;
  entityId?: string | null;
  studyId?: string | null;
  siteId?: string | null;
  before?: unknown;
  after?: unknown;
  reason?: string | null;
  /** True when the entry would let a reader infer an arm; blinded readers never see it. */
  revealsAllocation?: boolean;
};

// One lock key for the whole chain: entries are linked in commit order.
const CHAIN_LOCK_KEY = 7_261_905_001;
const OCCURRED_AT_TEXT = `to_char(%s AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"')`;
export const occurredAtSql = (column: string) => OCCURRED_AT_TEXT.replace('%s', column);

/** A JSON round trip gives exactly what jsonb will hand back when the chain is verified. */
const normalise = (v: unknown): unknown => (v === undefined ? null : JSON.parse(JSON.stringify(v)));

/**
 * Appends entries to the audit trail inside the caller's transaction. Call it last, just
 * before commit: it takes the chain lock, which is held until the transaction ends.
 */
export async function appendAudit(tx: EntityManager, actor: AuditActor, entries: AuditEntry[]): Promise<void> {
  if (entries.length === 0) return;
  if (!tx.queryRunner?.isTransactionActive) {
    throw new AppError('internal', 'Audit entries must be written inside the transaction of their change');
  }
  await tx.query('SELECT pg_advisory_xact_lock($1)', [CHAIN_LOCK_KEY]);
  // After the lock (its own statement, so this one's snapshot sees every committed entry): the
  // chain head, the time and the sequence numbers in one round trip.
  const head: { prev: string | null; at: string; seqs: string[] }[] = await tx.query(
    `SELECT (SELECT hash FROM audit_event ORDER BY seq DESC LIMIT 1) AS prev, ${occurredAtSql('clock_timestamp()')} AS at,
            ARRAY(SELECT nextval(pg_get_serial_sequence('audit_event', 'seq'))::text FROM generate_series(1, $1)) AS seqs`,
    [entries.length],
  );
  const seqs = head[0]!.seqs.map((seq) => ({ seq }));
  let prevHash = head[0]?.prev ?? GENESIS_HASH;
  const occurredAt = head[0]!.at;
  const rows: HashedAuditContent[] = [];
  const hashes: string[] = [];
  entries.forEach((e, i) => {
    const content: HashedAuditContent = {
      seq: seqs[i]!.seq,
      id: randomUUID(),
      occurredAt,
      actorId: actor.userId,
      actorEmail: actor.email,
      actorRole: actor.role,
      action: e.action,
      entityType: e.entityType,
      entityId: e.entityId ?? null,
      studyId: e.studyId ?? null,
      siteId: e.siteId ?? null,
      before: normalise(e.before),
      after: normalise(e.after),
      reason: e.reason ?? null,
      requestId: actor.requestId,
      revealsAllocation: e.revealsAllocation ?? false,
      prevHash,
    };
    const hash = auditHash(content);
    rows.push(content);
    hashes.push(hash);
    prevHash = hash;
  });
  // Insert in chunks to stay under PostgreSQL's parameter limit on large imports.
  const columns = 18;
  const chunk = Math.floor(60_000 / columns);
  for (let start = 0; start < rows.length; start += chunk) {
    const slice = rows.slice(start, start + chunk);
    const values: unknown[] = [];
    const tuples = slice.map((r, j) => {
      const b = j * columns;
      values.push(
        r.seq, r.id, r.occurredAt, r.actorId, r.actorEmail, r.actorRole, r.action, r.entityType, r.entityId,
        r.studyId, r.siteId, r.before === null ? null : JSON.stringify(r.before),
        r.after === null ? null : JSON.stringify(r.after), r.reason, r.requestId, r.revealsAllocation, r.prevHash,
        hashes[start + j],
      );
      return `(${Array.from({ length: columns }, (_, k) => `$${b + k + 1}`).join(',')})`;
    });
    await tx.query(
      `INSERT INTO audit_event (seq, id, occurred_at, actor_id, actor_email, actor_role, action, entity_type,
         entity_id, study_id, site_id, before, after, reason, request_id, reveals_allocation, prev_hash, hash)
       VALUES ${tuples.join(',')}`,
      values,
    );
  }
}
