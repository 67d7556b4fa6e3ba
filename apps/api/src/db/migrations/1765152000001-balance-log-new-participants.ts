import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * The balance change log skips the baseline values of participants inserted by the same
 * statement. Their 'participant' change row (not there before) already makes the recompute add
 * them with every value they have now, so a row per value only cost the log writes: a
 * 50,000-participant import logged a million of them. The statement that inserts participants
 * together with their values (enrollment and import) says so by setting
 * counterpoise.values_of_new_participants for itself; this trigger reads it and clears it again,
 * so no later statement of the transaction is skipped.
 */
/** The trigger function with `skip` at the start of its INSERT branch; the other branches are unchanged. */
const balanceLogBaseline = (skip: string) => `
CREATE OR REPLACE FUNCTION balance_log_baseline() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'INSERT' THEN${skip}
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
`;

const SKIP_VALUES_OF_NEW_PARTICIPANTS = `
    IF current_setting('counterpoise.values_of_new_participants', true) = 'on' THEN
      PERFORM set_config('counterpoise.values_of_new_participants', 'off', true);
      RETURN NULL;
    END IF;`;

export class BalanceLogNewParticipants1765152000001 implements MigrationInterface {
  name = 'BalanceLogNewParticipants1765152000001';

  async up(q: QueryRunner): Promise<void> {
    await q.query(balanceLogBaseline(SKIP_VALUES_OF_NEW_PARTICIPANTS));
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(balanceLogBaseline(''));
  }
}
