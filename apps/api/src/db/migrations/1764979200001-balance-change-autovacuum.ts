import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * The balance change log is written and emptied all day (an import of 5,000 participants adds
 * 150,000 rows that the next recompute deletes). With the default scale factor autovacuum
 * would wait for 20% of the table to be dead; until then every recompute steps over the dead
 * index entries. Vacuum it after a fixed number of dead rows instead.
 */
export class BalanceChangeAutovacuum1764979200001 implements MigrationInterface {
  name = 'BalanceChangeAutovacuum1764979200001';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE balance_change SET (autovacuum_vacuum_scale_factor = 0, autovacuum_vacuum_threshold = 5000,
      autovacuum_vacuum_insert_scale_factor = 0, autovacuum_vacuum_insert_threshold = 5000)`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE balance_change RESET (autovacuum_vacuum_scale_factor, autovacuum_vacuum_threshold,
      autovacuum_vacuum_insert_scale_factor, autovacuum_vacuum_insert_threshold)`);
  }
}
