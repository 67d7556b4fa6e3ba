import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Balance monitoring: persisted accumulator state per (study, site, arm, covariate, level), a
 * change log filled by triggers so a recompute can update that state incrementally, balance
 * snapshots kept as history, drift alerts and their e-mail notifications (one per alert,
 * recipient and opening, so a retried job never e-mails twice).
 *
 * The change log records, per changed row, the values as they were before the change
 * (old_exists = false for an insert). The recompute deletes the rows it consumes in the same
 * statement that reads the current data, so it sees exactly the changes whose log rows it took.
 */
export class Balance1764720000000 implements MigrationInterface {
  name = 'Balance1764720000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
CREATE TABLE balance_accumulator (
  study_id uuid NOT NULL REFERENCES study(id),
  site_id uuid NOT NULL REFERENCES site(id),
  arm_id uuid NOT NULL REFERENCES arm(id),
  -- '' = the participant count of (site, arm); otherwise a covariate key.
  covariate_key text NOT NULL,
  -- '' = moments of the value (continuous, binary 0/1); otherwise one categorical level.
  level text NOT NULL,
  -- MomentAccumulator.toJSON() from @counterpoise/stats.
  state jsonb NOT NULL,
  PRIMARY KEY (study_id, site_id, arm_id, covariate_key, level)
);

CREATE TABLE balance_state (
  study_id uuid PRIMARY KEY REFERENCES study(id),
  design_version integer NOT NULL,
  -- Fingerprint of the covariate definitions the accumulators were built for.
  covariate_fingerprint text NOT NULL,
  last_full_at timestamptz NOT NULL,
  changes_since_full integer NOT NULL DEFAULT 0,
  -- Medians and quartiles per covariate and arm, from the last run that computed them from all rows.
  quantiles jsonb NOT NULL DEFAULT '{}'::jsonb,
  quantiles_computed_at timestamptz NOT NULL,
  updated_at timestamptz NOT NULL DEFAULT now()
);

CREATE TABLE balance_change (
  id bigserial PRIMARY KEY,
  study_id uuid NOT NULL,
  participant_id uuid NOT NULL,
  source text NOT NULL CHECK (source IN ('participant', 'baseline', 'allocation')),
  covariate_id uuid,
  old_exists boolean NOT NULL,
  old_status text,
  old_site_id uuid,
  old_arm_id uuid,
  old_value_number double precision,
  old_value_text text,
  changed_at timestamptz NOT NULL DEFAULT now()
);
CREATE INDEX balance_change_study_idx ON balance_change (study_id, id);

CREATE TABLE balance_snapshot (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  study_id uuid NOT NULL REFERENCES study(id),
  computed_at timestamptz NOT NULL DEFAULT now(),
  kind text NOT NULL CHECK (kind IN ('full', 'incremental')),
  reason text NOT NULL,
  design_version integer NOT NULL,
  enrolled_count integer NOT NULL,
  -- Arm-level result (unblinded roles only): overall balance and the site grid.
  result jsonb NOT NULL,
  -- Blinded pooled figures for sponsors, computed at the same time; carries no arm.
  pooled jsonb NOT NULL,
  -- Compact per-covariate SMDs and chance bands, overall and per site, for the history chart.
  trend jsonb NOT NULL
);
CREATE INDEX balance_snapshot_study_idx ON balance_snapshot (study_id, computed_at DESC);

CREATE TABLE balance_snapshot_site (
  snapshot_id uuid NOT NULL REFERENCES balance_snapshot(id) ON DELETE CASCADE,
  site_id uuid NOT NULL REFERENCES site(id),
  result jsonb NOT NULL,
  PRIMARY KEY (snapshot_id, site_id)
);

CREATE TABLE alert (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  study_id uuid NOT NULL REFERENCES study(id),
  rule text NOT NULL CHECK (rule IN ('smd_threshold', 'variance_ratio', 'smd_beyond_chance')),
  covariate_key text NOT NULL,
  -- null = overall (all sites).
  site_id uuid REFERENCES site(id),
  arm_id uuid NOT NULL REFERENCES arm(id),
  reference_arm_id uuid NOT NULL REFERENCES arm(id),
  opening integer NOT NULL CHECK (opening >= 1),
  state text NOT NULL CHECK (state IN ('open', 'acknowledged', 'cleared')),
  opened_at timestamptz NOT NULL DEFAULT now(),
  opened_snapshot_id uuid REFERENCES balance_snapshot(id),
  acknowledged_by uuid REFERENCES app_user(id),
  acknowledged_at timestamptz,
  acknowledge_comment text,
  cleared_at timestamptz,
  last_evaluated_at timestamptz NOT NULL DEFAULT now(),
  last_smd double precision,
  last_variance_ratio double precision,
  last_half_width double precision,
  last_n_arm integer NOT NULL DEFAULT 0,
  last_n_reference integer NOT NULL DEFAULT 0,
  -- study | rule | covariate | site or 'overall' | arm | opening
  idempotency_key text NOT NULL UNIQUE
);
CREATE INDEX alert_study_idx ON alert (study_id, state, opened_at DESC);
-- At most one live (open or acknowledged) alert per condition.
CREATE UNIQUE INDEX alert_live_idx ON alert (study_id, rule, covariate_key, COALESCE(site_id, '00000000-0000-0000-0000-000000000000'::uuid), arm_id)
  WHERE state IN ('open', 'acknowledged');

CREATE TABLE alert_notification (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  alert_id uuid NOT NULL REFERENCES alert(id),
  recipient_user_id uuid NOT NULL REFERENCES app_user(id),
  recipient_email text NOT NULL,
  -- alert idempotency key | recipient
  idempotency_key text NOT NULL UNIQUE,
  created_at timestamptz NOT NULL DEFAULT now(),
  sent_at timestamptz
);
CREATE INDEX alert_notification_unsent_idx ON alert_notification (recipient_user_id) WHERE sent_at IS NULL;

-- Change log triggers: statement-level with transition tables, so a 5,000-row import logs in one INSERT.
CREATE FUNCTION balance_log_participant() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'INSERT' THEN
    INSERT INTO balance_change (study_id, participant_id, source, old_exists)
      SELECT n.study_id, n.id, 'participant', false FROM new_rows n;
  ELSIF TG_OP = 'UPDATE' THEN
    INSERT INTO balance_change (study_id, participant_id, source, old_exists, old_status, old_site_id, old_arm_id)
      SELECT o.study_id, o.id, 'participant', true, o.status, o.site_id, o.exposure_arm_id
        FROM old_rows o JOIN new_rows n ON n.id = o.id
       WHERE o.status IS DISTINCT FROM n.status OR o.site_id IS DISTINCT FROM n.site_id
          OR o.exposure_arm_id IS DISTINCT FROM n.exposure_arm_id OR o.study_id IS DISTINCT FROM n.study_id;
  ELSE
    INSERT INTO balance_change (study_id, participant_id, source, old_exists, old_status, old_site_id, old_arm_id)
      SELECT o.study_id, o.id, 'participant', true, o.status, o.site_id, o.exposure_arm_id FROM old_rows o;
  END IF;
  RETURN NULL;
END;
$$;
CREATE TRIGGER balance_log_participant_ins AFTER INSERT ON participant REFERENCING NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION balance_log_participant();
CREATE TRIGGER balance_log_participant_upd AFTER UPDATE ON participant REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION balance_log_participant();
CREATE TRIGGER balance_log_participant_del AFTER DELETE ON participant REFERENCING OLD TABLE AS old_rows
  FOR EACH STATEMENT EXECUTE FUNCTION balance_log_participant();

CREATE FUNCTION balance_log_baseline() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'INSERT' THEN
    INSERT INTO balance_change (study_id, participant_id, source, covariate_id, old_exists)
      SELECT p.study_id, n.participant_id, 'baseline', n.covariate_id, false
        FROM new_rows n JOIN participant p ON p.id = n.participant_id;
  ELSIF TG_OP = 'UPDATE' THEN
    INSERT INTO balance_change (study_id, participant_id, source, covariate_id, old_exists, old_value_number, old_value_text)
      SELECT p.study_id, o.participant_id, 'baseline', o.covariate_id, true, o.value_number, o.value_text
        FROM old_rows o JOIN new_rows n ON n.participant_id = o.participant_id AND n.covariate_id = o.covariate_id
        JOIN participant p ON p.id = o.participant_id
       WHERE o.value_number IS DISTINCT FROM n.value_number OR o.value_text IS DISTINCT FROM n.value_text;
  ELSE
    INSERT INTO balance_change (study_id, participant_id, source, covariate_id, old_exists, old_value_number, old_value_text)
      SELECT p.study_id, o.participant_id, 'baseline', o.covariate_id, true, o.value_number, o.value_text
        FROM old_rows o JOIN participant p ON p.id = o.participant_id;
  END IF;
  RETURN NULL;
END;
$$;
CREATE TRIGGER balance_log_baseline_ins AFTER INSERT ON baseline_value REFERENCING NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION balance_log_baseline();
CREATE TRIGGER balance_log_baseline_upd AFTER UPDATE ON baseline_value REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION balance_log_baseline();
CREATE TRIGGER balance_log_baseline_del AFTER DELETE ON baseline_value REFERENCING OLD TABLE AS old_rows
  FOR EACH STATEMENT EXECUTE FUNCTION balance_log_baseline();

CREATE FUNCTION balance_log_allocation() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'INSERT' THEN
    INSERT INTO balance_change (study_id, participant_id, source, old_exists)
      SELECT n.study_id, n.participant_id, 'allocation', false FROM new_rows n;
  ELSIF TG_OP = 'UPDATE' THEN
    INSERT INTO balance_change (study_id, participant_id, source, old_exists, old_arm_id)
      SELECT o.study_id, o.participant_id, 'allocation', true, o.arm_id
        FROM old_rows o JOIN new_rows n ON n.id = o.id
       WHERE o.arm_id IS DISTINCT FROM n.arm_id OR o.participant_id IS DISTINCT FROM n.participant_id;
  ELSE
    INSERT INTO balance_change (study_id, participant_id, source, old_exists, old_arm_id)
      SELECT o.study_id, o.participant_id, 'allocation', true, o.arm_id FROM old_rows o;
  END IF;
  RETURN NULL;
END;
$$;
CREATE TRIGGER balance_log_allocation_ins AFTER INSERT ON allocation REFERENCING NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION balance_log_allocation();
CREATE TRIGGER balance_log_allocation_upd AFTER UPDATE ON allocation REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION balance_log_allocation();
CREATE TRIGGER balance_log_allocation_del AFTER DELETE ON allocation REFERENCING OLD TABLE AS old_rows
  FOR EACH STATEMENT EXECUTE FUNCTION balance_log_allocation();
`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`
DROP TRIGGER IF EXISTS balance_log_participant_ins ON participant;
DROP TRIGGER IF EXISTS balance_log_participant_upd ON participant;
DROP TRIGGER IF EXISTS balance_log_participant_del ON participant;
DROP TRIGGER IF EXISTS balance_log_baseline_ins ON baseline_value;
DROP TRIGGER IF EXISTS balance_log_baseline_upd ON baseline_value;
DROP TRIGGER IF EXISTS balance_log_baseline_del ON baseline_value;
DROP TRIGGER IF EXISTS balance_log_allocation_ins ON allocation;
DROP TRIGGER IF EXISTS balance_log_allocation_upd ON allocation;
DROP TRIGGER IF EXISTS balance_log_allocation_del ON allocation;
DROP FUNCTION IF EXISTS balance_log_participant(), balance_log_baseline(), balance_log_allocation();
DROP TABLE IF EXISTS alert_notification, alert, balance_snapshot_site, balance_snapshot, balance_change,
  balance_state, balance_accumulator CASCADE;
`);
  }
}
