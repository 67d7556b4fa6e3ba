import { randomUUID } from 'node:crypto';
import type { EntityManager } from 'typeorm';
import { AppError } from '../../http/app-error.js';
import { contentHash, type AuditContent } from './audit-hash.js';

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

const OCCURRED_AT_TEXT = `to_char(%s AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"')`;
export const occurredAtSql = (column: string) => OCCURRED_AT_TEXT.replace('%s', column);

/** Entries per audit_pending row; a larger append (an import's batch) writes several rows. */
export const PENDING_ROW_MAX = 2000;

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
 * the chain lock is held only inside the server while it commits, never across a round trip
 * and never for the length of a long transaction such as an import. Entries are linked in the
 * order they were appended.
 */
export async function appendAudit(tx: EntityManager, actor: AuditActor, entries: AuditEntry[]): Promise<void> {
  if (entries.length === 0) return;
  assertInTransaction(tx);
  const payloads: string[] = [];
  for (let i = 0; i < entries.length; i += PENDING_ROW_MAX) payloads.push(pendingAuditPayload(actor, entries.slice(i, i + PENDING_ROW_MAX)));
  await tx.query(`INSERT INTO audit_pending (entries) SELECT e FROM unnest($1::jsonb[]) WITH ORDINALITY AS t(e, n) ORDER BY n`, [payloads]);
}

function assertInTransaction(tx: EntityManager): void {
  if (!tx.queryRunner?.isTransactionActive) {
    throw new AppError('internal', 'Audit entries must be written inside the transaction of their change');
  }
}

/**
 * The audit_pending payload of up to PENDING_ROW_MAX entries, for a caller that writes it in
 * the same statement as its change (one round trip less on the enrollment path). The caller
 * inserts it as `INSERT INTO audit_pending (entries) VALUES ($n::jsonb)` in the transaction `tx`.
 */
export function pendingAuditPayload(actor: AuditActor, entries: AuditEntry[], tx?: EntityManager): string {
  if (tx) assertInTransaction(tx);
  if (entries.length === 0 || entries.length > PENDING_ROW_MAX) {
    throw new AppError('internal', `A pending audit payload holds 1 to ${PENDING_ROW_MAX} entries`);
  }
  return JSON.stringify(
    entries.map((e) => {
      const c = contentOf(actor, e);
      return { ...c, contentHash: contentHash(c) };
    }),
  );
}
