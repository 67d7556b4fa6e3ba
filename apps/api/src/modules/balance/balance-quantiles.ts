import type { QuantileSet } from './balance-compute.js';
import { armSql, rows, type Queryable, type StudyConfig } from './balance-config.js';

/**
 * Medians, quartiles and range of every continuous covariate per arm and pooled, from all rows.
 * percentile_cont is linear interpolation between order statistics at h = (n - 1) p, the same
 * definition as `summarize` in @counterpoise/stats (Hyndman & Fan type 7); the recompute test
 * checks the two agree. Moments update incrementally, order statistics do not: see the job for
 * when these are refreshed.
 */
export async function computeQuantiles(db: Queryable, config: StudyConfig): Promise<QuantileSet> {
  const data = await rows<{
    key: string;
    arm_id: string | null;
    q: [number, number, number];
    min: number;
    max: number;
  }>(
    db,
    `SELECT b.covariate_id AS key, ${armSql(config.kind)} AS arm_id,
            percentile_cont(ARRAY[0.25, 0.5, 0.75]) WITHIN GROUP (ORDER BY b.value_number) AS q,
            min(b.value_number) AS min, max(b.value_number) AS max
       FROM participant p
       LEFT JOIN allocation a ON a.participant_id = p.id
       JOIN baseline_value b ON b.participant_id = p.id
       JOIN covariate_definition c ON c.id = b.covariate_id AND c.study_id = $1 AND c.kind = 'continuous'
      WHERE p.study_id = $1 AND p.status IN ('enrolled', 'withdrawn') AND ${armSql(config.kind)} IS NOT NULL
        AND b.value_number IS NOT NULL
      GROUP BY GROUPING SETS ((b.covariate_id, ${armSql(config.kind)}), (b.covariate_id))`,
    [config.id],
  );
  const out: QuantileSet = {};
  const keyOf = new Map(config.covariates.map((c) => [c.id, c.key]));
  for (const r of data) {
    const key = keyOf.get(r.key);
    if (!key) continue;
    const entry = (out[key] ??= { byArm: {}, pooled: undefined });
    const q = { q1: r.q[0], median: r.q[1], q3: r.q[2], min: r.min, max: r.max };
    if (r.arm_id === null) entry.pooled = q;
    else entry.byArm[r.arm_id] = q;
  }
  return out;
}
