import { randomUUID } from 'node:crypto';
import type { EntityManager } from 'typeorm';
import { AppError } from '../../http/app-error.js';
import { GENESIS_HASH, chainHash, contentHash, type AuditContent } from './audit-hash.js';

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

// One lock key for the whole chain: entries are linked in commit order. The commit-time seal in
// PostgreSQL (audit_seal_pending) takes the same key.
const CHAIN_LOCK_KEY = 7_261_905_001;
const OCCURRED_AT_TEXT = `to_char(%s AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"')`;
export const occurredAtSql = (column: string) => OCCURRED_AT_TEXT.replace('%s', column);

/**
 * Up to this many entries go through audit_pending and are linked at commit; larger batches
 * (imports) are linked here, under the chain lock, which moving them twice would cost more than
 * the lock does for one long transaction.
 */
export const SEAL_AT_COMMIT_MAX = 500;

/** A JSON round trip gives exactly what jsonb will hand back when the chain is verified. */
const normalise = (v: unknown): unknown => (v === undefined ? null : JSON.parse(JSON.stringify(v)));

function contentOf(actor: AuditActor, e: AuditEntry): AuditContent {
  return {
    id: randomUUID(),
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
  };
}

/**
 * Appends entries to the audit trail inside the caller's transaction: they exist exactly when
 * the change commits. The API hashes each entry's content; PostgreSQL gives it its sequence
 * number and time and links it into the chain at COMMIT (see the AuditCommitSeal migration), so
 * the chain lock is held only inside the server, never across a round trip.
 */
export async function appendAudit(tx: EntityManager, actor: AuditActor, entries: AuditEntry[]): Promise<void> {
  if (entries.length === 0) return;
  assertInTransaction(tx);
  if (entries.length <= SEAL_AT_COMMIT_MAX) {
    await tx.query(`INSERT INTO audit_pending (entries) VALUES ($1::jsonb)`, [pendingAuditPayload(actor, entries)]);
    return;
  }
  await appendLinked(tx, entries.map((e) => contentOf(actor, e)));
}

function assertInTransaction(tx: EntityManager): void {
  if (!tx.queryRunner?.isTransactionActive) {
    throw new AppError('internal', 'Audit entries must be written inside the transaction of their change');
  }
}

/**
 * The audit_pending payload of up to SEAL_AT_COMMIT_MAX entries, for a caller that writes it in
 * the same statement as its change (one round trip less on the enrollment path). The caller
 * inserts it as `INSERT INTO audit_pending (entries) VALUES ($n::jsonb)` in the transaction `tx`.
 */
export function pendingAuditPayload(actor: AuditActor, entries: AuditEntry[], tx?: EntityManager): string {
  if (tx) assertInTransaction(tx);
  if (entries.length === 0 || entries.length > SEAL_AT_COMMIT_MAX) {
    throw new AppError('internal', `A pending audit payload holds 1 to ${SEAL_AT_COMMIT_MAX} entries`);
  }
  return JSON.stringify(
    entries.map((e) => {
      const c = contentOf(actor, e);
      return { ...c, contentHash: contentHash(c) };
    }),
  );
}

/** Large batches: link here, under the chain lock, which is then held until the transaction ends. */
async function appendLinked(tx: EntityManager, contents: AuditContent[]): Promise<void> {
  await tx.query('SELECT pg_advisory_xact_lock($1)', [CHAIN_LOCK_KEY]);
  // After the lock (its own statement, so this one's snapshot sees every committed entry): the
  // chain head, the time and the sequence numbers in one round trip.
  const head: { prev: string | null; at: string; seqs: string[] }[] = await tx.query(
    `SELECT (SELECT hash FROM audit_event ORDER BY seq DESC LIMIT 1) AS prev, ${occurredAtSql('clock_timestamp()')} AS at,
            ARRAY(SELECT nextval(pg_get_serial_sequence('audit_event', 'seq'))::text FROM generate_series(1, $1)) AS seqs`,
    [contents.length],
  );
  const seqs = head[0]!.seqs;
  let prevHash = head[0]?.prev ?? GENESIS_HASH;
  const occurredAt = head[0]!.at;
  const links: { prev: string; hash: string; content: string }[] = contents.map((c, i) => {
    const content = contentHash(c);
    const hash = chainHash(prevHash, seqs[i]!, occurredAt, content);
    const link = { prev: prevHash, hash, content };
    prevHash = hash;
    return link;
  });
  // One JSON parameter per chunk: PostgreSQL binds one value instead of 19 per event.
  const chunk = 2000;
  for (let start = 0; start < contents.length; start += chunk) {
    const rows = contents.slice(start, start + chunk).map((c, j) => {
      const l = links[start + j]!;
      return { ...c, seq: seqs[start + j], prevHash: l.prev, hash: l.hash, contentHash: l.content };
    });
    await tx.query(
      `INSERT INTO audit_event (seq, id, occurred_at, actor_id, actor_email, actor_role, action, entity_type,
         entity_id, study_id, site_id, before, after, reason, request_id, reveals_allocation, prev_hash, hash,
         content_hash, hash_scheme)
       SELECT r."seq", r."id", $2::timestamptz, r."actorId", r."actorEmail", r."actorRole", r."action", r."entityType",
              r."entityId", r."studyId", r."siteId", NULLIF(r."before", 'null'::jsonb), NULLIF(r."after", 'null'::jsonb),
              r."reason", r."requestId", r."revealsAllocation", r."prevHash", r."hash", r."contentHash", 2
         FROM jsonb_to_recordset($1::jsonb) AS r("seq" bigint, "id" uuid, "actorId" uuid, "actorEmail" text, "actorRole" text,
              "action" text, "entityType" text, "entityId" text, "studyId" uuid, "siteId" uuid, "before" jsonb, "after" jsonb,
              "reason" text, "requestId" text, "revealsAllocation" boolean, "prevHash" text, "hash" text, "contentHash" text)
        ORDER BY r."seq"`,
      [JSON.stringify(rows), occurredAt],
    );
  }
}
