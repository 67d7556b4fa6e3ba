import { createHash } from 'node:crypto';

export const GENESIS_HASH = '0'.repeat(64);

/** JSON with object keys sorted at every level, so the same content always hashes the same. */
export function canonicalJson(value: unknown): string {
  if (value === null || value === undefined) return 'null';
  if (Array.isArray(value)) return `[${value.map(canonicalJson).join(',')}]`;
  if (typeof value === 'object') {
    const entries = Object.entries(value as Record<string, unknown>)
      .filter(([, v]) => v !== undefined)
      .sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
    return `{${entries.map(([k, v]) => `${JSON.stringify(k)}:${canonicalJson(v)}`).join(',')}}`;
  }
  return JSON.stringify(value);
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

/** SHA-256 over the canonical content, which includes the previous event's hash (a hash chain). */
export function auditHash(content: HashedAuditContent): string {
  return createHash('sha256').update(canonicalJson(content)).digest('hex');
}
