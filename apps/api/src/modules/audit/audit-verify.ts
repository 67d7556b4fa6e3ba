import type { DataSource } from 'typeorm';
import { GENESIS_HASH, auditHash, chainHash, contentHash } from './audit-hash.js';
import { occurredAtSql } from './audit.service.js';

export type VerifyResult = {
  ok: boolean;
  checked: number;
  firstBroken: { seq: number; id: string; problem: 'hash_mismatch' | 'chain_broken' } | null;
  lastHash: string | null;
};

type Row = {
  seq: string;
  id: string;
  occurred_at: string;
  actor_id: string | null;
  actor_email: string | null;
  actor_role: string | null;
  action: string;
  entity_type: string;
  entity_id: string | null;
  study_id: string | null;
  site_id: string | null;
  before: unknown;
  after: unknown;
  reason: string | null;
  request_id: string | null;
  reveals_allocation: boolean;
  prev_hash: string;
  hash: string;
  hash_scheme: number;
};

/**
 * Walks the whole chain in order and reports the first event whose stored hash does not
 * match its content (altered) or whose link does not match the previous event (removed,
 * inserted or reordered). Events carry their hash scheme: 1 for those written before the
 * commit-time seal, 2 after (see audit-hash.ts); an unknown scheme counts as a mismatch.
 */
export async function verifyAuditChain(ds: DataSource, batchSize = 5000): Promise<VerifyResult> {
  let prev = GENESIS_HASH;
  let afterSeq = '0';
  let checked = 0;
  for (;;) {
    const rows: Row[] = await ds.query(
      `SELECT seq::text, id, ${occurredAtSql('occurred_at')} AS occurred_at, actor_id, actor_email, actor_role,
              action, entity_type, entity_id, study_id, site_id, before, after, reason, request_id,
              reveals_allocation, prev_hash, hash, hash_scheme
         FROM audit_event WHERE audit_event.seq > $1 ORDER BY audit_event.seq LIMIT $2`,
      [afterSeq, batchSize],
    );
    for (const r of rows) {
      const broken = (problem: 'hash_mismatch' | 'chain_broken'): VerifyResult => ({
        ok: false,
        checked,
        firstBroken: { seq: Number(r.seq), id: r.id, problem },
        lastHash: prev,
      });
      if (r.prev_hash !== prev) return broken('chain_broken');
      const content = {
        id: r.id,
        actorId: r.actor_id,
        actorEmail: r.actor_email,
        actorRole: r.actor_role,
        action: r.action,
        entityType: r.entity_type,
        entityId: r.entity_id,
        studyId: r.study_id,
        siteId: r.site_id,
        before: r.before,
        after: r.after,
        reason: r.reason,
        requestId: r.request_id,
        revealsAllocation: r.reveals_allocation,
      };
      // Scheme 2 (linked at commit): the content hash is recomputed here, never read from the row.
      const recomputed =
        r.hash_scheme === 2
          ? chainHash(r.prev_hash, r.seq, r.occurred_at, contentHash(content))
          : r.hash_scheme === 1
            ? auditHash({ ...content, seq: r.seq, occurredAt: r.occurred_at, prevHash: r.prev_hash })
            : null;
      if (recomputed !== r.hash) return broken('hash_mismatch');
      prev = r.hash;
      checked += 1;
    }
    if (rows.length < batchSize) break;
    afterSeq = rows[rows.length - 1]!.seq;
  }
  return { ok: true, checked, firstBroken: null, lastHash: checked ? prev : null };
}
