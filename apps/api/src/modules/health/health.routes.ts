import { Router } from 'express';
import type { AppContext } from '../../app-context.js';

type QueueState = { name: string; state: string; n: number };

/** Database reachability and the job queue: pending, failed and dead-lettered jobs per queue. */
export function healthRoutes(ctx: AppContext): Router {
  const r = Router();
  r.get('/health', async (_req, res) => {
    let database: 'ok' | 'down' = 'ok';
    let queues: Record<string, Record<string, number>> = {};
    let queue: 'ok' | 'degraded' | 'down' = 'ok';
    try {
      await ctx.ds.query('SELECT 1');
    } catch {
      database = 'down';
    }
    if (database === 'ok') {
      try {
        const rows: QueueState[] = await ctx.ds.query(
          `SELECT name, state::text AS state, count(*)::int AS n FROM pgboss.job
            WHERE state IN ('created', 'retry', 'active', 'failed') OR name LIKE '%.dead'
            GROUP BY name, state ORDER BY name, state`,
        );
        queues = {};
        for (const row of rows) (queues[row.name] ??= {})[row.state] = row.n;
        const failing = rows.some((row) => row.state === 'failed' || (row.name.endsWith('.dead') && row.n > 0));
        if (failing) queue = 'degraded';
      } catch {
        queue = 'down';
      }
    } else queue = 'down';
    const ok = database === 'ok' && queue !== 'down';
    res.status(ok ? 200 : 503).json({ status: ok ? (queue === 'ok' ? 'ok' : 'degraded') : 'down', database, queue, queues });
  });
  return r;
}
