import { MomentAccumulator, type AccumulatorState } from '@counterpoise/stats';
import {
  armSql,
  codeValue,
  isCounted,
  rows,
  type Queryable,
  type StudyConfig,
} from './balance-config.js';

/**
 * The persisted sufficient statistics of a study: one MomentAccumulator per (site, arm,
 * covariate, level). covariate '' holds the participant count of (site, arm); level '' holds
 * the moments of a continuous or binary (0/1) value; a categorical level holds that level's
 * count (an accumulator of ones).
 */
export type CellKey = { siteId: string; armId: string; covariateKey: string; level: string };
export const cellId = (siteId: string, armId: string, covariateKey: string, level: string) =>
  `${siteId}|${armId}|${covariateKey}|${level}`;

/** The stored state does not match the data (e.g. a remove from an empty cell): rebuild from all rows. */
export class AccumulatorsOutOfStep extends Error {
  override name = 'AccumulatorsOutOfStep';
}

export class AccumulatorSet {
  readonly cells = new Map<string, { key: CellKey; acc: MomentAccumulator }>();
  readonly dirty = new Set<string>();

  get(siteId: string, armId: string, covariateKey: string, level: string): MomentAccumulator | undefined {
    return this.cells.get(cellId(siteId, armId, covariateKey, level))?.acc;
  }

  /** Applies one value to a cell: +1 adds it, -1 removes it (the exact inverse). */
  apply(key: CellKey, x: number, sign: 1 | -1): void {
    const id = cellId(key.siteId, key.armId, key.covariateKey, key.level);
    let cell = this.cells.get(id);
    if (!cell) {
      if (sign < 0) throw new Error(`balance: removing from an empty cell ${id}; the accumulators are out of step`);
      cell = { key, acc: new MomentAccumulator() };
      this.cells.set(id, cell);
    }
    if (sign > 0) cell.acc.add(x);
    else cell.acc.remove(x);
    this.dirty.add(id);
  }

  set(key: CellKey, acc: MomentAccumulator): void {
    const id = cellId(key.siteId, key.armId, key.covariateKey, key.level);
    this.cells.set(id, { key, acc });
  }
}

/** A participant as the accumulators count it: site, arm, and coded value per covariate key. */
export type Contribution = { siteId: string; armId: string; values: Map<string, number | string> };

export function applyContribution(set: AccumulatorSet, c: Contribution, sign: 1 | -1): void {
  set.apply({ siteId: c.siteId, armId: c.armId, covariateKey: '', level: '' }, 1, sign);
  for (const [key, v] of c.values) {
    if (typeof v === 'number') set.apply({ siteId: c.siteId, armId: c.armId, covariateKey: key, level: '' }, v, sign);
    else set.apply({ siteId: c.siteId, armId: c.armId, covariateKey: key, level: v }, 1, sign);
  }
}

type AggregateRow = {
  site_id: string;
  arm_id: string;
  covariate_id: string | null;
  value_text: string | null;
  value_key: number | null;
  n_all: number;
  n_num: number;
  mean: number | null;
  var: number | null;
};

/**
 * Rebuilds every cell from all rows, in one statement that also consumes the study's change
 * log: the statement's snapshot sees exactly the changes whose log rows it deletes, so a change
 * committed meanwhile stays logged for the next (incremental) run.
 *
 * n, mean and M2 = (n - 1) * var_samp are PostgreSQL's float8 aggregates (Youngs-Cramer
 * updates); they become MomentAccumulator states, merged with Chan et al.'s formula where
 * several groups feed one cell, and then update exactly as if every value had been added one by
 * one.
 */
export async function aggregateAll(db: Queryable, config: StudyConfig): Promise<AccumulatorSet> {
  // One hash aggregate over the join, on the raw columns: per (site, arm, covariate, text, number
  // for non-continuous kinds) a count, mean and M2. Decoding by kind happens per group in Node
  // (a few thousand groups) rather than per value in SQL (millions), with the same codeValue rule
  // the incremental path uses.
  const data = await rows<AggregateRow>(
    db,
    `WITH consumed AS (DELETE FROM balance_change WHERE study_id = $1 RETURNING id)
     SELECT p.site_id, ${armSql(config.kind)} AS arm_id, b.covariate_id, b.value_text,
            CASE WHEN c.kind <> 'continuous' THEN b.value_number END AS value_key,
            count(*)::int AS n_all, count(b.value_number)::int AS n_num, avg(b.value_number) AS mean,
            var_samp(b.value_number) AS var
       FROM participant p
       LEFT JOIN allocation a ON a.participant_id = p.id
       JOIN baseline_value b ON b.participant_id = p.id
       JOIN covariate_definition c ON c.id = b.covariate_id AND c.study_id = $1
      WHERE p.study_id = $1 AND p.status IN ('enrolled', 'withdrawn') AND ${armSql(config.kind)} IS NOT NULL
      GROUP BY 1, 2, 3, 4, 5
     UNION ALL
     SELECT p.site_id, ${armSql(config.kind)}, NULL, NULL, NULL, count(*)::int, 0, NULL, NULL
       FROM participant p LEFT JOIN allocation a ON a.participant_id = p.id
      WHERE p.study_id = $1 AND p.status IN ('enrolled', 'withdrawn') AND ${armSql(config.kind)} IS NOT NULL
      GROUP BY 1, 2`,
    [config.id],
  );
  const covById = new Map(config.covariates.map((c) => [c.id, c]));
  const set = new AccumulatorSet();
  const mergeInto = (siteId: string, armId: string, covariateKey: string, level: string, state: AccumulatorState) => {
    const incoming = MomentAccumulator.fromState(state);
    const existing = set.get(siteId, armId, covariateKey, level);
    if (existing) existing.merge(incoming);
    else set.set({ siteId, armId, covariateKey, level }, incoming);
  };
  const constant = (n: number, x: number): AccumulatorState => ({ version: 1, n, sumWeights: n, sumSquaredWeights: n, mean: x, m2: 0 });
  for (const r of data) {
    if (r.covariate_id === null) {
      mergeInto(r.site_id, r.arm_id, '', '', constant(r.n_all, 1));
      continue;
    }
    const cov = covById.get(r.covariate_id);
    if (!cov) continue;
    if (cov.kind === 'continuous') {
      if (r.n_num === 0) continue;
      const m2 = r.n_num > 1 ? Math.max(0, (r.var ?? 0) * (r.n_num - 1)) : 0;
      mergeInto(r.site_id, r.arm_id, cov.key, '', { version: 1, n: r.n_num, sumWeights: r.n_num, sumSquaredWeights: r.n_num, mean: r.mean!, m2 });
      continue;
    }
    // Every row of this group has the same (number, text), hence the same coded value.
    const v = codeValue(cov.kind, r.value_key, r.value_text);
    if (v === null) continue;
    if (typeof v === 'number') mergeInto(r.site_id, r.arm_id, cov.key, '', constant(r.n_all, v));
    else mergeInto(r.site_id, r.arm_id, cov.key, v, constant(r.n_all, 1));
  }
  for (const id of set.cells.keys()) set.dirty.add(id);
  return set;
}

export async function loadAccumulators(db: Queryable, studyId: string, siteId: string | null = null): Promise<AccumulatorSet> {
  const data = await rows<{ site_id: string; arm_id: string; covariate_key: string; level: string; state: unknown }>(
    db,
    `SELECT site_id, arm_id, covariate_key, level, state FROM balance_accumulator
      WHERE study_id = $1 AND ($2::uuid IS NULL OR site_id = $2)`,
    [studyId, siteId],
  );
  const set = new AccumulatorSet();
  for (const r of data) {
    set.set(
      { siteId: r.site_id, armId: r.arm_id, covariateKey: r.covariate_key, level: r.level },
      MomentAccumulator.fromState(r.state),
    );
  }
  return set;
}

/** Writes the cells changed in this run (all of them after a full rebuild); empty cells are deleted. */
export async function saveAccumulators(db: Queryable, studyId: string, set: AccumulatorSet, replaceAll: boolean): Promise<void> {
  if (replaceAll) await db.query(`DELETE FROM balance_accumulator WHERE study_id = $1`, [studyId]);
  const upserts: { s: string; a: string; c: string; l: string; st: AccumulatorState }[] = [];
  const deletes: { s: string; a: string; c: string; l: string }[] = [];
  for (const id of set.dirty) {
    const cell = set.cells.get(id);
    if (!cell) continue;
    const k = { s: cell.key.siteId, a: cell.key.armId, c: cell.key.covariateKey, l: cell.key.level };
    if (cell.acc.n === 0) {
      deletes.push(k);
      set.cells.delete(id);
    } else upserts.push({ ...k, st: cell.acc.toJSON() });
  }
  // One statement per 5,000 cells: jsonb_to_recordset keeps the parameter count at one.
  for (let i = 0; i < upserts.length; i += 5000) {
    await db.query(
      `INSERT INTO balance_accumulator (study_id, site_id, arm_id, covariate_key, level, state)
       SELECT $1, x.s, x.a, x.c, x.l, x.st FROM jsonb_to_recordset($2::jsonb) AS x(s uuid, a uuid, c text, l text, st jsonb)
       ON CONFLICT (study_id, site_id, arm_id, covariate_key, level) DO UPDATE SET state = EXCLUDED.state`,
      [studyId, JSON.stringify(upserts.slice(i, i + 5000))],
    );
  }
  if (deletes.length && !replaceAll) {
    await db.query(
      `DELETE FROM balance_accumulator t USING jsonb_to_recordset($2::jsonb) AS x(s uuid, a uuid, c text, l text)
        WHERE t.study_id = $1 AND t.site_id = x.s AND t.arm_id = x.a AND t.covariate_key = x.c AND t.level = x.l`,
      [studyId, JSON.stringify(deletes)],
    );
  }
  set.dirty.clear();
}

/** Distinct participants with logged changes not yet consumed. */
export async function pendingChangeCount(db: Queryable, studyId: string): Promise<number> {
  const [r] = await rows<{ n: number }>(
    db,
    `SELECT count(DISTINCT participant_id)::int AS n FROM balance_change WHERE study_id = $1`,
    [studyId],
  );
  return r?.n ?? 0;
}

type ChangedRow = {
  id: string;
  study_id: string | null;
  status: string | null;
  site_id: string | null;
  exposure_arm_id: string | null;
  alloc_arm_id: string | null;
  p_changed: boolean;
  p_old_exists: boolean | null;
  old_status: string | null;
  old_site_id: string | null;
  old_exposure_arm_id: string | null;
  a_changed: boolean;
  a_old_exists: boolean | null;
  old_alloc_arm_id: string | null;
  cur_values: [string, number | null, string | null][];
  old_overrides: [string, boolean, number | null, string | null][];
};

/**
 * Consumes the change log and moves each changed participant's contribution from what was
 * counted to what is there now. "What was counted" is the current row with every logged field
 * put back to its value before the earliest logged change (the log keeps old values), which is
 * exactly the state the accumulators last saw. Reads and consumes in one statement (one
 * snapshot). Returns the number of participants updated.
 */
export async function applyChanges(db: Queryable, config: StudyConfig, set: AccumulatorSet): Promise<number> {
  const changed = await rows<ChangedRow>(
    db,
    `WITH taken AS MATERIALIZED (DELETE FROM balance_change WHERE study_id = $1 RETURNING *),
     ids AS (SELECT DISTINCT participant_id FROM taken),
     fp AS (SELECT DISTINCT ON (participant_id) participant_id, old_exists, old_status, old_site_id, old_arm_id
              FROM taken WHERE source = 'participant' ORDER BY participant_id, id),
     fa AS (SELECT DISTINCT ON (participant_id) participant_id, old_exists, old_arm_id
              FROM taken WHERE source = 'allocation' ORDER BY participant_id, id),
     fb AS (SELECT DISTINCT ON (participant_id, covariate_id) participant_id, covariate_id, old_exists, old_value_number, old_value_text
              FROM taken WHERE source = 'baseline' ORDER BY participant_id, covariate_id, id)
     SELECT i.participant_id AS id, p.study_id, p.status, p.site_id, p.exposure_arm_id, a.arm_id AS alloc_arm_id,
            fp.participant_id IS NOT NULL AS p_changed, fp.old_exists AS p_old_exists, fp.old_status, fp.old_site_id,
            fp.old_arm_id AS old_exposure_arm_id,
            fa.participant_id IS NOT NULL AS a_changed, fa.old_exists AS a_old_exists, fa.old_arm_id AS old_alloc_arm_id,
            (SELECT COALESCE(json_agg(json_build_array(b.covariate_id, b.value_number, b.value_text)), '[]'::json)
               FROM baseline_value b WHERE b.participant_id = i.participant_id) AS cur_values,
            (SELECT COALESCE(json_agg(json_build_array(f.covariate_id, f.old_exists, f.old_value_number, f.old_value_text)), '[]'::json)
               FROM fb f WHERE f.participant_id = i.participant_id) AS old_overrides
       FROM ids i
       LEFT JOIN participant p ON p.id = i.participant_id
       LEFT JOIN allocation a ON a.participant_id = i.participant_id
       LEFT JOIN fp ON fp.participant_id = i.participant_id
       LEFT JOIN fa ON fa.participant_id = i.participant_id`,
    [config.id],
  );
  const byId = new Map(config.covariates.map((c) => [c.id, c]));
  const armIds = new Set(config.arms.map((a) => a.id));
  const trial = config.kind === 'randomized_trial';

  const contribution = (
    exists: boolean,
    status: string | null,
    siteId: string | null,
    armId: string | null,
    values: Map<string, [number | null, string | null]>,
  ): Contribution | null => {
    if (!exists || !isCounted(status) || !siteId || !armId || !armIds.has(armId)) return null;
    const coded = new Map<string, number | string>();
    for (const [covId, [num, text]] of values) {
      const cov = byId.get(covId);
      if (!cov) continue;
      const v = codeValue(cov.kind, num, text);
      if (v !== null) coded.set(cov.key, v);
    }
    return { siteId, armId, values: coded };
  };

  for (const r of changed) {
    const nowExists = r.status !== null && r.study_id === config.id;
    const cur = new Map<string, [number | null, string | null]>(r.cur_values.map(([id, n, t]) => [id, [n, t]]));
    const now = contribution(nowExists, r.status, r.site_id, trial ? r.alloc_arm_id : r.exposure_arm_id, cur);

    const old = new Map(cur);
    for (const [covId, existed, n, t] of r.old_overrides) {
      if (existed) old.set(covId, [n, t]);
      else old.delete(covId);
    }
    const oldExists = r.p_changed ? r.p_old_exists === true : nowExists;
    const oldStatus = r.p_changed ? r.old_status : r.status;
    const oldSite = r.p_changed ? r.old_site_id : r.site_id;
    const oldExposure = r.p_changed ? r.old_exposure_arm_id : r.exposure_arm_id;
    const oldAlloc = r.a_changed ? (r.a_old_exists ? r.old_alloc_arm_id : null) : r.alloc_arm_id;
    const before = contribution(oldExists, oldStatus, oldSite, trial ? oldAlloc : oldExposure, old);

    try {
      if (before) applyContribution(set, before, -1);
      if (now) applyContribution(set, now, 1);
    } catch (err) {
      throw new AccumulatorsOutOfStep(err instanceof Error ? err.message : String(err));
    }
  }
  return changed.length;
}
