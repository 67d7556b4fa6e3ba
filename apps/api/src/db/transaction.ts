import type { DataSource, EntityManager } from 'typeorm';

/** Runs `work` in one READ COMMITTED transaction: every write in it, audit entries included, commits or none does. */
export function inTransaction<T>(ds: DataSource, work: (tx: EntityManager) => Promise<T>): Promise<T> {
  return ds.transaction('READ COMMITTED', work);
}
