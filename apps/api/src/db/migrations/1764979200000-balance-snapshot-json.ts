import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Balance snapshots are written on every recompute and read back whole as text, never queried
 * inside: plain json stores and returns the text as is, where jsonb parses it on every write and
 * re-serialises it on every read.
 */
export class BalanceSnapshotJson1764979200000 implements MigrationInterface {
  name = 'BalanceSnapshotJson1764979200000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
ALTER TABLE balance_snapshot
  ALTER COLUMN result TYPE json USING result::json,
  ALTER COLUMN pooled TYPE json USING pooled::json,
  ALTER COLUMN trend TYPE json USING trend::json;
`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`
ALTER TABLE balance_snapshot
  ALTER COLUMN result TYPE jsonb USING result::jsonb,
  ALTER COLUMN pooled TYPE jsonb USING pooled::jsonb,
  ALTER COLUMN trend TYPE jsonb USING trend::jsonb;
`);
  }
}
