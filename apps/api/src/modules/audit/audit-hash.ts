import { createHash } from 'node:crypto';

export const GENESIS_HASH = '0'.repeat(64);

/** JSON with object keys sorted at every level, so the same content always hashes the same. */
export function canonicalJson(value: unknown): string {
  if (value === null || value === undefined) return 'null';
  if (typeof value !== 'object') return JSON.stringify(value);
  if (Array.isArray(value)) {
    let out = '[';
    for (let i = 0; i < value.length; i++) out += (i ? ',' : '') + canonicalJson(value[i]);
    return `${out}]`;
  }
  const obj = value as Record<string, unknown>;
  // Default sort compares UTF-16 code units, as `<` on strings does.
  const keys = Object.keys(obj).sort();
  let out = '{';
  let first = true;
  for (const k of keys) {
    const v = obj[k];
    if (v === undefined) continue;
    out += `${first ? '' : ','}${JSON.stringify(k)}:${canonicalJson(v)}`;
    first = false;
  }
  return `${out}}`;
}

/** The fields an audit event's hash covers; `occurredAt` is the UTC text with microseconds. */
export type HashedAuditContent = {
  seq: string;
  id: string;
  occurredAt: string;
  actorId: string | null;
  actorEmail: string | null;
  actorRole: string | null;
  action: string;
  entityType: string;
  entityId: string | null;
  studyId: string | null;
  siteId: string | null;
  before: unknown;
  after: unknown;
  reason: string | null;
  requestId: string | null;
  revealsAllocation: boolean;
  prevHash: string;
};

/** Scheme 1 (events written before the commit-time seal): SHA-256 over the canonical content, which includes the previous event's hash. */
export function auditHash(content: HashedAuditContent): string {
  return createHash('sha256').update(canonicalJson(content)).digest('hex');
}

/** What scheme 2 hashes as an event's content: everything but its place in the chain (sequence, time, link). */
export type AuditContent = Omit<HashedAuditContent, 'seq' | 'occurredAt' | 'prevHash'>;

/** Scheme 2, content part: SHA-256 over the canonical JSON of the content, computed by the API. */
export function contentHash(content: AuditContent): string {
  return createHash('sha256')
    .update(
      canonicalJson({
        id: content.id,
        actorId: content.actorId,
        actorEmail: content.actorEmail,
        actorRole: content.actorRole,
        action: content.action,
        entityType: content.entityType,
        entityId: content.entityId,
        studyId: content.studyId,
        siteId: content.siteId,
        before: content.before,
        after: content.after,
        reason: content.reason,
        requestId: content.requestId,
        revealsAllocation: content.revealsAllocation,
      }),
    )
    .digest('hex');
}

/**
 * Scheme 2, chain part: SHA-256 over the previous event's hash, this event's sequence number,
 * its UTC time (microseconds) and its content hash. PostgreSQL computes the same in
 * audit_seal_pending() when it links entries at commit (migration AuditCommitSeal).
 */
export function chainHash(prevHash: string, seq: string, occurredAt: string, content: string): string {
  return createHash('sha256').update(`counterpoise-audit-2|${prevHash}|${seq}|${occurredAt}|${content}`, 'utf8').digest('hex');
}
