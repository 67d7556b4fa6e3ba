import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Analysis at the end of a study: recorded outcome values, the pre-specified analysis
 * (versioned; a locked version carries its electronic signature per 21 CFR 11.50/11.200:
 * printed name, UTC time, meaning, and a hash of the signed content), and each run with its
 * full result. Corrections of outcome values are audited with before/after and a reason in
 * audit_event, in the same transaction.
 */
export class Analysis1764806400000 implements MigrationInterface {
  name = 'Analysis1764806400000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
CREATE TABLE outcome_value (
  participant_id uuid NOT NULL REFERENCES participant(id),
  outcome_key text NOT NULL CHECK (outcome_key ~ '^[a-z][a-z0-9_]{0,39}$'),
  value double precision NOT NULL,
  measured_on date NOT NULL,
  entered_by uuid REFERENCES app_user(id),
  created_at timestamptz NOT NULL DEFAULT now(),
  updated_at timestamptz NOT NULL DEFAULT now(),
  PRIMARY KEY (participant_id, outcome_key)
);
CREATE INDEX outcome_value_key_idx ON outcome_value (outcome_key);

CREATE TABLE analysis_spec (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  study_id uuid NOT NULL REFERENCES study(id),
  version integer NOT NULL CHECK (version > 0),
  spec jsonb NOT NULL,
  status text NOT NULL DEFAULT 'draft' CHECK (status IN ('draft', 'locked')),
  created_by uuid REFERENCES app_user(id),
  created_at timestamptz NOT NULL DEFAULT now(),
  updated_at timestamptz NOT NULL DEFAULT now(),
  locked_at timestamptz,
  locked_by uuid REFERENCES app_user(id),
  signer_name text,
  signature_meaning text,
  -- SHA-256 of the canonical spec JSON at signing: links the signature to exactly this content (21 CFR 11.70).
  signed_content_sha256 text,
  UNIQUE (study_id, version),
  CHECK ((status = 'locked') = (locked_at IS NOT NULL AND locked_by IS NOT NULL AND signer_name IS NOT NULL
                                AND signature_meaning IS NOT NULL AND signed_content_sha256 IS NOT NULL))
);

-- A locked version is never changed again: a later change is a new version.
CREATE FUNCTION analysis_spec_locked_is_final() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'DELETE' AND OLD.status = 'locked' THEN
    RAISE EXCEPTION 'analysis_spec version % is locked and cannot be deleted', OLD.version USING ERRCODE = 'insufficient_privilege';
  END IF;
  IF TG_OP = 'UPDATE' AND OLD.status = 'locked' THEN
    RAISE EXCEPTION 'analysis_spec version % is locked and cannot be changed', OLD.version USING ERRCODE = 'insufficient_privilege';
  END IF;
  RETURN CASE WHEN TG_OP = 'DELETE' THEN OLD ELSE NEW END;
END;
$$;
CREATE TRIGGER analysis_spec_locked_final BEFORE UPDATE OR DELETE ON analysis_spec
  FOR EACH ROW EXECUTE FUNCTION analysis_spec_locked_is_final();

CREATE TABLE analysis_run (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  study_id uuid NOT NULL REFERENCES study(id),
  spec_id uuid NOT NULL REFERENCES analysis_spec(id),
  spec_version integer NOT NULL,
  exploratory boolean NOT NULL,
  reason text,
  result jsonb NOT NULL,
  run_at timestamptz NOT NULL DEFAULT now(),
  run_by uuid NOT NULL REFERENCES app_user(id),
  CHECK (NOT exploratory OR reason IS NOT NULL)
);
CREATE INDEX analysis_run_study_idx ON analysis_run (study_id, run_at DESC);
`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`
DROP TABLE IF EXISTS analysis_run, analysis_spec, outcome_value CASCADE;
DROP FUNCTION IF EXISTS analysis_spec_locked_is_final();
`);
  }
}
