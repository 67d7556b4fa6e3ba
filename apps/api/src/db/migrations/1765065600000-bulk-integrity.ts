import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * The references of baseline values, checked once per statement instead of once per row.
 * A 50,000-participant import writes a million values; PostgreSQL's per-row foreign-key checks
 * cost most of that import's time. Statement-level triggers over the inserted rows check the
 * same two references in one anti-join each, and the referenced participant and covariate rows
 * are guarded against deletion while values point at them, so integrity is what it was.
 */
export class BulkIntegrity1765065600000 implements MigrationInterface {
  name = 'BulkIntegrity1765065600000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
ALTER TABLE baseline_value
  DROP CONSTRAINT baseline_value_participant_id_fkey,
  DROP CONSTRAINT baseline_value_covariate_id_fkey;

CREATE FUNCTION baseline_value_check_references() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF EXISTS (SELECT 1 FROM new_rows n WHERE NOT EXISTS (SELECT 1 FROM participant p WHERE p.id = n.participant_id)) THEN
    RAISE EXCEPTION 'baseline_value refers to a participant that does not exist' USING ERRCODE = 'foreign_key_violation';
  END IF;
  IF EXISTS (SELECT 1 FROM new_rows n WHERE NOT EXISTS (SELECT 1 FROM covariate_definition c WHERE c.id = n.covariate_id)) THEN
    RAISE EXCEPTION 'baseline_value refers to a covariate that does not exist' USING ERRCODE = 'foreign_key_violation';
  END IF;
  RETURN NULL;
END;
$$;
CREATE TRIGGER baseline_value_references_ins AFTER INSERT ON baseline_value REFERENCING NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION baseline_value_check_references();
CREATE TRIGGER baseline_value_references_upd AFTER UPDATE ON baseline_value REFERENCING NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION baseline_value_check_references();

CREATE FUNCTION baseline_value_guard_parent() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'UPDATE' AND NEW.id = OLD.id THEN
    RETURN NEW;
  END IF;
  IF EXISTS (SELECT 1 FROM baseline_value b
              WHERE (TG_TABLE_NAME = 'participant' AND b.participant_id = OLD.id)
                 OR (TG_TABLE_NAME = 'covariate_definition' AND b.covariate_id = OLD.id)) THEN
    RAISE EXCEPTION '% % still has baseline values', TG_TABLE_NAME, OLD.id USING ERRCODE = 'foreign_key_violation';
  END IF;
  RETURN CASE WHEN TG_OP = 'DELETE' THEN OLD ELSE NEW END;
END;
$$;
CREATE TRIGGER participant_guard_baseline BEFORE DELETE OR UPDATE OF id ON participant
  FOR EACH ROW EXECUTE FUNCTION baseline_value_guard_parent();
CREATE TRIGGER covariate_guard_baseline BEFORE DELETE OR UPDATE OF id ON covariate_definition
  FOR EACH ROW EXECUTE FUNCTION baseline_value_guard_parent();
`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`
DROP TRIGGER IF EXISTS participant_guard_baseline ON participant;
DROP TRIGGER IF EXISTS covariate_guard_baseline ON covariate_definition;
DROP TRIGGER IF EXISTS baseline_value_references_ins ON baseline_value;
DROP TRIGGER IF EXISTS baseline_value_references_upd ON baseline_value;
DROP FUNCTION IF EXISTS baseline_value_guard_parent();
DROP FUNCTION IF EXISTS baseline_value_check_references();
ALTER TABLE baseline_value
  ADD CONSTRAINT baseline_value_participant_id_fkey FOREIGN KEY (participant_id) REFERENCES participant(id),
  ADD CONSTRAINT baseline_value_covariate_id_fkey FOREIGN KEY (covariate_id) REFERENCES covariate_definition(id);
`);
  }
}
