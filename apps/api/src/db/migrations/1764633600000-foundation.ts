import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Foundation schema: accounts and sessions, studies with sites, arms and covariates,
 * participants with dated baseline values, allocations, and the append-only audit trail.
 * Reviewed by hand; never edit once merged, add a new migration instead.
 */
export class Foundation1764633600000 implements MigrationInterface {
  name = 'Foundation1764633600000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
CREATE TABLE app_user (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  email text NOT NULL,
  display_name text NOT NULL,
  password_hash text,
  is_admin boolean NOT NULL DEFAULT false,
  status text NOT NULL DEFAULT 'invited' CHECK (status IN ('invited', 'active', 'disabled')),
  created_at timestamptz NOT NULL DEFAULT now(),
  updated_at timestamptz NOT NULL DEFAULT now()
);
CREATE UNIQUE INDEX app_user_email_key ON app_user (lower(email));

CREATE TABLE user_session (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  user_id uuid NOT NULL REFERENCES app_user(id),
  csrf_token text NOT NULL,
  created_at timestamptz NOT NULL DEFAULT now(),
  expires_at timestamptz NOT NULL,
  revoked_at timestamptz,
  ip text,
  user_agent text
);
CREATE INDEX user_session_user_idx ON user_session (user_id);

CREATE TABLE one_time_token (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  user_id uuid NOT NULL REFERENCES app_user(id),
  purpose text NOT NULL CHECK (purpose IN ('invite', 'reset')),
  token_hash text NOT NULL UNIQUE,
  expires_at timestamptz NOT NULL,
  used_at timestamptz,
  created_at timestamptz NOT NULL DEFAULT now()
);

CREATE TABLE study (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  code text NOT NULL UNIQUE,
  title text NOT NULL,
  kind text NOT NULL CHECK (kind IN ('randomized_trial', 'observational_cohort')),
  blinding text NOT NULL CHECK (blinding IN ('blinded', 'open_label')),
  status text NOT NULL DEFAULT 'setup' CHECK (status IN ('setup', 'enrolling', 'closed')),
  target_sample_size integer NOT NULL CHECK (target_sample_size > 0),
  design_version integer NOT NULL DEFAULT 1,
  design jsonb NOT NULL DEFAULT '{}'::jsonb,
  created_at timestamptz NOT NULL DEFAULT now(),
  updated_at timestamptz NOT NULL DEFAULT now()
);

CREATE TABLE site (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  study_id uuid NOT NULL REFERENCES study(id),
  code text NOT NULL,
  name text NOT NULL,
  enrollment_target integer NOT NULL DEFAULT 0 CHECK (enrollment_target >= 0),
  status text NOT NULL DEFAULT 'active' CHECK (status IN ('active', 'paused', 'closed')),
  UNIQUE (study_id, code)
);

CREATE TABLE arm (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  study_id uuid NOT NULL REFERENCES study(id),
  code text NOT NULL,
  name text NOT NULL,
  ratio integer NOT NULL DEFAULT 1 CHECK (ratio > 0),
  position integer NOT NULL,
  UNIQUE (study_id, code)
);

CREATE TABLE membership (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  user_id uuid NOT NULL REFERENCES app_user(id),
  study_id uuid NOT NULL REFERENCES study(id),
  role text NOT NULL CHECK (role IN ('coordinator', 'statistician', 'sponsor', 'auditor')),
  site_ids uuid[] NOT NULL DEFAULT '{}',
  created_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (user_id, study_id, role)
);
CREATE INDEX membership_study_idx ON membership (study_id);

CREATE TABLE covariate_definition (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  study_id uuid NOT NULL REFERENCES study(id),
  key text NOT NULL CHECK (key ~ '^[a-z][a-z0-9_]{0,39}$'),
  label text NOT NULL,
  kind text NOT NULL CHECK (kind IN ('continuous', 'binary', 'categorical')),
  unit text,
  min_value double precision,
  max_value double precision,
  decimals integer CHECK (decimals BETWEEN 0 AND 6),
  levels text[],
  required boolean NOT NULL DEFAULT true,
  window_days_before integer NOT NULL DEFAULT 30 CHECK (window_days_before >= 0),
  window_days_after integer NOT NULL DEFAULT 0 CHECK (window_days_after >= 0),
  is_stratification boolean NOT NULL DEFAULT false,
  is_adjustment boolean NOT NULL DEFAULT false,
  is_outcome_baseline boolean NOT NULL DEFAULT false,
  reliability double precision CHECK (reliability > 0 AND reliability <= 1),
  position integer NOT NULL,
  UNIQUE (study_id, key)
);

CREATE TABLE participant (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  study_id uuid NOT NULL REFERENCES study(id),
  site_id uuid NOT NULL REFERENCES site(id),
  code text NOT NULL,
  status text NOT NULL CHECK (status IN ('screened', 'screen_failed', 'enrolled', 'withdrawn')),
  screened_at timestamptz,
  enrolled_at timestamptz,
  withdrawn_at timestamptz,
  withdrawal_reason text,
  consent_date date,
  consent_version text,
  exposure_arm_id uuid REFERENCES arm(id),
  import_key text,
  created_at timestamptz NOT NULL DEFAULT now(),
  updated_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (study_id, code)
);
CREATE INDEX participant_study_site_idx ON participant (study_id, site_id, status);
CREATE UNIQUE INDEX participant_import_key_idx ON participant (study_id, import_key) WHERE import_key IS NOT NULL;

CREATE TABLE baseline_value (
  participant_id uuid NOT NULL REFERENCES participant(id),
  covariate_id uuid NOT NULL REFERENCES covariate_definition(id),
  value_number double precision,
  value_text text,
  measured_on date NOT NULL,
  updated_at timestamptz NOT NULL DEFAULT now(),
  PRIMARY KEY (participant_id, covariate_id),
  CHECK (value_number IS NOT NULL OR value_text IS NOT NULL)
);
CREATE INDEX baseline_value_covariate_idx ON baseline_value (covariate_id);

CREATE TABLE screening (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  study_id uuid NOT NULL REFERENCES study(id),
  site_id uuid NOT NULL REFERENCES site(id),
  participant_id uuid REFERENCES participant(id),
  screened_at timestamptz NOT NULL DEFAULT now(),
  screened_by uuid REFERENCES app_user(id),
  answers jsonb NOT NULL,
  eligible boolean NOT NULL,
  failed_criteria jsonb NOT NULL DEFAULT '[]'::jsonb
);
CREATE INDEX screening_study_idx ON screening (study_id, site_id, screened_at);

CREATE TABLE stratum_counter (
  study_id uuid NOT NULL REFERENCES study(id),
  stratum_key text NOT NULL,
  next_position integer NOT NULL DEFAULT 0,
  PRIMARY KEY (study_id, stratum_key)
);

CREATE TABLE allocation (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  participant_id uuid NOT NULL UNIQUE REFERENCES participant(id),
  study_id uuid NOT NULL REFERENCES study(id),
  arm_id uuid NOT NULL REFERENCES arm(id),
  stratum_key text NOT NULL,
  position integer NOT NULL,
  kit_code text NOT NULL,
  algorithm text NOT NULL,
  algorithm_version text NOT NULL,
  design_version integer NOT NULL,
  detail jsonb NOT NULL DEFAULT '{}'::jsonb,
  allocated_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (study_id, stratum_key, position),
  UNIQUE (study_id, kit_code)
);

CREATE TABLE consent_document (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  participant_id uuid NOT NULL REFERENCES participant(id),
  storage_name text NOT NULL UNIQUE,
  original_name text NOT NULL,
  media_type text NOT NULL,
  size_bytes integer NOT NULL,
  sha256 text NOT NULL,
  uploaded_by uuid REFERENCES app_user(id),
  uploaded_at timestamptz NOT NULL DEFAULT now()
);

CREATE TABLE import_batch (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  study_id uuid NOT NULL REFERENCES study(id),
  file_sha256 text NOT NULL,
  original_name text NOT NULL,
  row_count integer NOT NULL,
  status text NOT NULL CHECK (status IN ('previewed', 'committed')),
  created_by uuid REFERENCES app_user(id),
  created_at timestamptz NOT NULL DEFAULT now(),
  committed_at timestamptz
);
CREATE UNIQUE INDEX import_batch_committed_idx ON import_batch (study_id, file_sha256) WHERE status = 'committed';

CREATE TABLE audit_event (
  seq bigserial PRIMARY KEY,
  id uuid NOT NULL UNIQUE DEFAULT gen_random_uuid(),
  occurred_at timestamptz NOT NULL,
  actor_id uuid,
  actor_email text,
  actor_role text,
  action text NOT NULL,
  entity_type text NOT NULL,
  entity_id text,
  study_id uuid,
  site_id uuid,
  before jsonb,
  after jsonb,
  reason text,
  request_id text,
  reveals_allocation boolean NOT NULL DEFAULT false,
  prev_hash text NOT NULL,
  hash text NOT NULL
);
CREATE INDEX audit_event_entity_idx ON audit_event (entity_type, entity_id, seq);
CREATE INDEX audit_event_study_idx ON audit_event (study_id, seq);
CREATE INDEX audit_event_action_idx ON audit_event (action, entity_id, occurred_at);
CREATE INDEX audit_event_sign_in_ip_idx ON audit_event ((after ->> 'ip'), occurred_at) WHERE action = 'auth.sign_in_failed';

-- The audit trail is append-only, enforced by the database itself (21 CFR 11.10(e)).
CREATE FUNCTION audit_event_reject_change() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  RAISE EXCEPTION 'audit_event is append-only: % is not allowed', TG_OP USING ERRCODE = 'insufficient_privilege';
END;
$$;
CREATE TRIGGER audit_event_no_update BEFORE UPDATE OR DELETE ON audit_event
  FOR EACH ROW EXECUTE FUNCTION audit_event_reject_change();
CREATE TRIGGER audit_event_no_truncate BEFORE TRUNCATE ON audit_event
  FOR EACH STATEMENT EXECUTE FUNCTION audit_event_reject_change();
`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`
DROP TABLE IF EXISTS audit_event, import_batch, consent_document, allocation, stratum_counter, screening,
  baseline_value, participant, covariate_definition, membership, arm, site, study, one_time_token,
  user_session, app_user CASCADE;
DROP FUNCTION IF EXISTS audit_event_reject_change();
`);
  }
}
