import type { ImportProgress } from '@counterpoise/contracts/participants';

/**
 * Progress of imports in this API process, keyed by a client-chosen id, so the web can poll
 * while a large file is validated and written. Entries expire after ten minutes. (One API
 * process: behind several processes, progress would move to the database.)
 */
const TTL_MS = 10 * 60_000;
const entries = new Map<string, { userId: string | null; progress: ImportProgress; at: number }>();

export function setProgress(id: string, userId: string | null, progress: ImportProgress): void {
  const now = Date.now();
  entries.set(id, { userId, progress, at: now });
  if (entries.size > 1000) for (const [k, v] of entries) if (now - v.at > TTL_MS) entries.delete(k);
}

export function getProgress(id: string, userId: string | null): ImportProgress | null {
  const e = entries.get(id);
  if (!e || e.userId !== userId || Date.now() - e.at > TTL_MS) return null;
  return e.progress;
}
