import type { MigrationInterface, QueryRunner } from 'typeorm';

/** One row per sponsor digest delivered, so a retried or re-run weekly job never sends twice. */
export class Digest1764892800000 implements MigrationInterface {
  name = 'Digest1764892800000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
CREATE TABLE digest_delivery (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  study_id uuid NOT NULL REFERENCES study(id),
  recipient_id uuid NOT NULL REFERENCES app_user(id),
  period_start date NOT NULL,
  period_end date NOT NULL,
  sent_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (study_id, recipient_id, period_start)
);
`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE IF EXISTS digest_delivery`);
  }
}
