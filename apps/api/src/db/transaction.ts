import type { DataSource, EntityManager } from 'typeorm';

/**
 * Runs `work` in one transaction: every write in it, audit entries included, commits or none
 * does. PostgreSQL's default isolation, READ COMMITTED, is what the locking here is written for;
 * it is not set explicitly, which would cost every transaction one more round trip.
 */
export function inTransaction<T>(ds: DataSource, work: (tx: EntityManager) => Promise<T>): Promise<T> {
  return ds.transaction(work);
}

/**
 * Rows of any statement. TypeORM's `query` answers UPDATE/DELETE ... RETURNING with
 * `[rows, rowCount]` rather than the rows, so statements that return rows from an update go
 * through here.
 */
export async function queryRows<T>(q: Pick<EntityManager, 'query'>, sql: string, params: unknown[] = []): Promise<T[]> {
  const result: unknown = await q.query(sql, params);
  if (Array.isArray(result) && result.length === 2 && Array.isArray(result[0]) && typeof result[1] === 'number') {
    return result[0] as T[];
  }
  return result as T[];
}
