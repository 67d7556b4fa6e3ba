import { DataSource } from 'typeorm';
import type { Env } from '../config/env.js';
import { entities } from './entities.js';
import { BulkIntegrity1765065600000 } from './migrations/1765065600000-bulk-integrity.js';
import { AuditCommitSeal1765152000000 } from './migrations/1765152000000-audit-commit-seal.js';
import { BalanceLogNewParticipants1765152000001 } from './migrations/1765152000001-balance-log-new-participants.js';
import { DropSnapshotSite1765152000002 } from './migrations/1765152000002-drop-snapshot-site.js';
import { Digest1764892800000 } from './migrations/1764892800000-digest.js';
import { Foundation1764633600000 } from './migrations/1764633600000-foundation.js';
import { Balance1764720000000 } from './migrations/1764720000000-balance.js';
import { Analysis1764806400000 } from './migrations/1764806400000-analysis.js';
import { BalanceSnapshotJson1764979200000 } from './migrations/1764979200000-balance-snapshot-json.js';
import { BalanceChangeAutovacuum1764979200001 } from './migrations/1764979200001-balance-change-autovacuum.js';

/** Every migration, in order. Add new ones at the end; never edit a merged one. */
export const migrations = [Foundation1764633600000, Balance1764720000000, Analysis1764806400000, Digest1764892800000, BalanceSnapshotJson1764979200000, BalanceChangeAutovacuum1764979200001, BulkIntegrity1765065600000, AuditCommitSeal1765152000000, BalanceLogNewParticipants1765152000001, DropSnapshotSite1765152000002];

type DbRole = 'app' | 'owner';

/** A DataSource for the application role (default) or the owner role (migrations). */
export function createDataSource(env: Env, role: DbRole = 'app', database = env.DB_NAME): DataSource {
  return new DataSource({
    type: 'postgres',
    host: env.DB_HOST,
    port: env.DB_PORT,
    database,
    username: role === 'owner' ? env.DB_OWNER_USER : env.DB_APP_USER,
    password: role === 'owner' ? env.DB_OWNER_PASSWORD : env.DB_APP_PASSWORD,
    entities,
    migrations,
    migrationsTableName: 'schema_migration',
    synchronize: false,
    logging: false,
    extra: { max: role === 'owner' ? 2 : env.DB_POOL_SIZE, application_name: `counterpoise-${role}` },
  });
}

/**
 * Runs pending migrations as the owner, then (re)grants the application role exactly what
 * it needs: full DML on ordinary tables, but only SELECT and INSERT on the audit trail.
 */
export async function migrate(env: Env, database = env.DB_NAME): Promise<string[]> {
  const ds = createDataSource(env, 'owner', database);
  await ds.initialize();
  try {
    const ran = await ds.runMigrations({ transaction: 'each' });
    const app = `"${env.DB_APP_USER.replaceAll('"', '""')}"`;
    await ds.query(`
      GRANT USAGE ON SCHEMA public TO ${app};
      GRANT SELECT, INSERT, UPDATE, DELETE ON ALL TABLES IN SCHEMA public TO ${app};
      GRANT USAGE, SELECT ON ALL SEQUENCES IN SCHEMA public TO ${app};
      REVOKE UPDATE, DELETE, TRUNCATE ON audit_event FROM ${app};
      REVOKE ALL ON schema_migration FROM ${app};
    `);
    return ran.map((m) => m.name);
  } finally {
    await ds.destroy();
  }
}
