import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Audit entries are linked into the hash chain at commit, inside PostgreSQL.
 *
 * Until now a transaction took the chain lock when it appended its entries and held it through
 * three more round trips to the API process and back (read the head, insert, commit), so every
 * writing request in the system queued behind whichever one held it. Now a transaction writes
 * its entries, with the SHA-256 of their content computed by the API, into `audit_pending`; a
 * deferred constraint trigger runs at COMMIT, takes the chain lock, numbers and timestamps the
 * entries, chains them (scheme 2: SHA-256 over the previous hash, sequence number, time and
 * content hash) and moves them into `audit_event`, which stays append-only. The lock is then held
 * only for that step inside the server. Events written before this migration keep scheme 1 and
 * verify as before; a scheme-2 event's prev_hash links to the last scheme-1 event.
 */
export class AuditCommitSeal1765152000000 implements MigrationInterface {
  name = 'AuditCommitSeal1765152000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
ALTER TABLE audit_event
  ADD COLUMN hash_scheme smallint NOT NULL DEFAULT 1,
  ADD COLUMN content_hash text;
-- Events written from now on name their scheme.
ALTER TABLE audit_event ALTER COLUMN hash_scheme DROP DEFAULT;
ALTER TABLE audit_event ADD CONSTRAINT audit_event_scheme_check
  CHECK (hash_scheme = 1 OR (hash_scheme = 2 AND content_hash IS NOT NULL));

-- Entries of transactions that have not committed yet: one row per append, never seen by others.
CREATE TABLE audit_pending (
  id bigserial PRIMARY KEY,
  txid bigint NOT NULL DEFAULT txid_current(),
  entries jsonb NOT NULL CHECK (jsonb_typeof(entries) = 'array')
);

CREATE FUNCTION audit_seal_pending() RETURNS trigger LANGUAGE plpgsql AS $$
DECLARE
  tx bigint := txid_current();
  prev text;
  at timestamptz;
  at_text text;
  seq_name text := pg_get_serial_sequence('audit_event', 'seq');
  s bigint;
  h text;
  e jsonb;
BEGIN
  -- The first pending row of a transaction seals all of them; later rows find theirs gone.
  IF NOT EXISTS (SELECT 1 FROM audit_pending WHERE id = NEW.id) THEN
    RETURN NULL;
  END IF;
  -- Same key as the API's direct path for large batches: one chain, linked in commit order.
  PERFORM pg_advisory_xact_lock(7261905001);
  -- Its own statement after the lock, so it sees every entry committed before us.
  SELECT hash INTO prev FROM audit_event ORDER BY seq DESC LIMIT 1;
  prev := coalesce(prev, repeat('0', 64));
  at := clock_timestamp();
  at_text := to_char(at AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"');
  FOR e IN
    SELECT x.value FROM audit_pending p CROSS JOIN LATERAL jsonb_array_elements(p.entries) WITH ORDINALITY AS x(value, ord)
     WHERE p.txid = tx ORDER BY p.id, x.ord
  LOOP
    s := nextval(seq_name);
    h := encode(sha256(convert_to('counterpoise-audit-2|' || prev || '|' || s::text || '|' || at_text || '|' || (e ->> 'contentHash'), 'UTF8')), 'hex');
    INSERT INTO audit_event (seq, id, occurred_at, actor_id, actor_email, actor_role, action, entity_type, entity_id,
                             study_id, site_id, before, after, reason, request_id, reveals_allocation, prev_hash, hash,
                             hash_scheme, content_hash)
    VALUES (s, (e ->> 'id')::uuid, at, (e ->> 'actorId')::uuid, e ->> 'actorEmail', e ->> 'actorRole', e ->> 'action',
            e ->> 'entityType', e ->> 'entityId', (e ->> 'studyId')::uuid, (e ->> 'siteId')::uuid,
            NULLIF(e -> 'before', 'null'::jsonb), NULLIF(e -> 'after', 'null'::jsonb), e ->> 'reason', e ->> 'requestId',
            (e ->> 'revealsAllocation')::boolean, prev, h, 2, e ->> 'contentHash');
    prev := h;
  END LOOP;
  DELETE FROM audit_pending WHERE txid = tx;
  RETURN NULL;
END;
$$;

CREATE CONSTRAINT TRIGGER audit_pending_seal AFTER INSERT ON audit_pending
  DEFERRABLE INITIALLY DEFERRED FOR EACH ROW EXECUTE FUNCTION audit_seal_pending();
`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`
DROP TABLE IF EXISTS audit_pending;
DROP FUNCTION IF EXISTS audit_seal_pending();
ALTER TABLE audit_event DROP CONSTRAINT IF EXISTS audit_event_scheme_check;
ALTER TABLE audit_event DROP COLUMN IF EXISTS content_hash, DROP COLUMN IF EXISTS hash_scheme;
`);
  }
}
