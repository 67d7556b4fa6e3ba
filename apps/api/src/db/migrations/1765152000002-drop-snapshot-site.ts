import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * balance_snapshot_site was never written: a site's view is rebuilt from the accumulators when
 * asked for (balance.service.ts armsText) and the site grid lives in the snapshot itself.
 */
export class DropSnapshotSite1765152000002 implements MigrationInterface {
  name = 'DropSnapshotSite1765152000002';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE IF EXISTS balance_snapshot_site`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`
CREATE TABLE balance_snapshot_site (
  snapshot_id uuid NOT NULL REFERENCES balance_snapshot(id) ON DELETE CASCADE,
  site_id uuid NOT NULL REFERENCES site(id),
  result jsonb NOT NULL,
  PRIMARY KEY (snapshot_id, site_id)
);`);
  }
}
