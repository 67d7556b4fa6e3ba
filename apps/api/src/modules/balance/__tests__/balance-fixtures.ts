import { randomUUID } from 'node:crypto';
import type PgBoss from 'pg-boss';
import { pino } from 'pino';
import { createStudy, type TestContext } from '../../../test/harness.js';
import { balanceRecomputeHandler, type RecomputePayload } from '../balance-recompute.job.js';

/** Test data for balance: written as the database owner, as the enrollment routes would. */

export type CovSpec = { key: string; kind: 'continuous' | 'binary' | 'categorical'; levels?: string[]; isAdjustment?: boolean };
export type BalanceStudy = {
  id: string;
  siteIds: string[];
  armIds: string[];
  covariates: (CovSpec & { id: string })[];
  kind: 'randomized_trial' | 'observational_cohort';
};
export type Value = number | string | null;

export async function createBalanceStudy(
  t: TestContext,
  opts: {
    kind?: 'randomized_trial' | 'observational_cohort';
    sites?: string[];
    arms?: string[];
    covariates: CovSpec[];
    design?: Record<string, unknown>;
  },
): Promise<BalanceStudy> {
  const kind = opts.kind ?? 'randomized_trial';
  const s = await createStudy(t, { kind, sites: opts.sites, arms: opts.arms, design: opts.design });
  const covariates: BalanceStudy['covariates'] = [];
  for (const [i, c] of opts.covariates.entries()) {
    const [row] = await t.ownerQuery<{ id: string }>(
      `INSERT INTO covariate_definition (study_id, key, label, kind, levels, position, is_adjustment, required)
       VALUES ($1, $2, $3, $4, $5, $6, $7, true) RETURNING id`,
      [s.id, c.key, c.key.replace(/_/g, ' '), c.kind, c.levels ?? null, i, c.isAdjustment ?? false],
    );
    covariates.push({ ...c, id: row!.id });
  }
  return { ...s, covariates, kind };
}

let counter = 0;

export type Enrollee = { site: number; arm: number; values: Record<string, Value>; status?: 'enrolled' | 'withdrawn' | 'screened' };

/** Inserts participants (with allocation or exposure and baseline values) in a few multi-row statements, like an import. */
export async function enroll(t: TestContext, study: BalanceStudy, people: Enrollee[]): Promise<string[]> {
  if (people.length === 0) return [];
  const ids = people.map(() => randomUUID());
  const p: unknown[] = [];
  const tuples = people.map((e, i) => {
    counter++;
    const b = p.length;
    p.push(ids[i], study.id, study.siteIds[e.site], `P${counter}-${ids[i]!.slice(0, 6)}`, e.status ?? 'enrolled',
      study.kind === 'observational_cohort' ? study.armIds[e.arm] : null);
    return `($${b + 1}, $${b + 2}, $${b + 3}, $${b + 4}, $${b + 5}, now(), $${b + 6})`;
  });
  await t.ownerQuery(
    `INSERT INTO participant (id, study_id, site_id, code, status, enrolled_at, exposure_arm_id) VALUES ${tuples.join(',')}`,
    p,
  );
  if (study.kind === 'randomized_trial') {
    const a: unknown[] = [];
    const at = people.map((e, i) => {
      counter++;
      const b = a.length;
      a.push(ids[i], study.id, study.armIds[e.arm], counter, `K${counter}-${ids[i]!.slice(0, 6)}`);
      return `($${b + 1}, $${b + 2}, $${b + 3}, 'all', $${b + 4}, $${b + 5}, 'test', '1', 1)`;
    });
    await t.ownerQuery(
      `INSERT INTO allocation (participant_id, study_id, arm_id, stratum_key, position, kit_code, algorithm, algorithm_version, design_version)
       VALUES ${at.join(',')}`,
      a,
    );
  }
  const v: unknown[] = [];
  const vt: string[] = [];
  people.forEach((e, i) => {
    for (const c of study.covariates) {
      const x = e.values[c.key];
      if (x === null || x === undefined) continue;
      const b = v.length;
      v.push(ids[i], c.id, typeof x === 'number' ? x : null, typeof x === 'string' ? x : null);
      vt.push(`($${b + 1}, $${b + 2}, $${b + 3}, $${b + 4}, current_date)`);
    }
  });
  for (let i = 0; i < vt.length; i += 2000) {
    const chunk = vt.slice(i, i + 2000);
    const start = i * 4;
    const params = v.slice(start, start + chunk.length * 4);
    const renumbered = chunk.map((_, k) => `($${k * 4 + 1}, $${k * 4 + 2}, $${k * 4 + 3}, $${k * 4 + 4}, current_date)`);
    await t.ownerQuery(
      `INSERT INTO baseline_value (participant_id, covariate_id, value_number, value_text, measured_on) VALUES ${renumbered.join(',')}`,
      params,
    );
  }
  return ids;
}

export async function correct(t: TestContext, study: BalanceStudy, participantId: string, key: string, value: Value): Promise<void> {
  const cov = study.covariates.find((c) => c.key === key)!;
  if (value === null) {
    await t.ownerQuery(`DELETE FROM baseline_value WHERE participant_id = $1 AND covariate_id = $2`, [participantId, cov.id]);
    return;
  }
  await t.ownerQuery(
    `INSERT INTO baseline_value (participant_id, covariate_id, value_number, value_text, measured_on)
     VALUES ($1, $2, $3, $4, current_date)
     ON CONFLICT (participant_id, covariate_id) DO UPDATE SET value_number = EXCLUDED.value_number, value_text = EXCLUDED.value_text, updated_at = now()`,
    [participantId, cov.id, typeof value === 'number' ? value : null, typeof value === 'string' ? value : null],
  );
}

export async function withdraw(t: TestContext, participantId: string): Promise<void> {
  await t.ownerQuery(`UPDATE participant SET status = 'withdrawn', withdrawn_at = now(), updated_at = now() WHERE id = $1`, [participantId]);
}

/** Enqueues a recompute the way the enrollment routes do: inside a transaction, singleton per study. */
export async function enqueue(t: TestContext, studyId: string, reason: string): Promise<string | null> {
  return t.ctx.ds.transaction(async (tx) =>
    t.ctx.jobs.send(tx, 'balance.recompute', { studyId, reason }, { singletonKey: studyId }),
  );
}

const silent = pino({ level: 'silent' });

/** Runs the registered handler directly, as the worker would, on one job. */
export async function runJob(t: TestContext, payload: RecomputePayload, jobId: string = randomUUID()): Promise<void> {
  const job = { id: jobId, name: 'balance.recompute', data: payload } as unknown as PgBoss.Job<object>;
  await balanceRecomputeHandler.handle(t.ctx, [job], silent);
}

/** A small seeded generator (mulberry32) so failures can be replayed. */
export function rng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let x = a;
    x = Math.imul(x ^ (x >>> 15), x | 1);
    x ^= x + Math.imul(x ^ (x >>> 7), x | 61);
    return ((x ^ (x >>> 14)) >>> 0) / 4294967296;
  };
}

export function normal(r: () => number, mean = 0, sd = 1): number {
  const u = Math.max(r(), 1e-12);
  return mean + sd * Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * r());
}

export type StoredRow = { id: string; siteId: string; armId: string; values: Map<string, { n: number | null; t: string | null }> };

/** Counted participants (ITT: enrolled and withdrawn) with their raw baseline values, read back from the database. */
export async function readCounted(t: TestContext, study: BalanceStudy): Promise<StoredRow[]> {
  const data = await t.ownerQuery<{ id: string; site_id: string; arm_id: string; cov: string | null; n: number | null; t: string | null }>(
    `SELECT p.id, p.site_id, ${study.kind === 'randomized_trial' ? 'a.arm_id' : 'p.exposure_arm_id'} AS arm_id,
            b.covariate_id AS cov, b.value_number AS n, b.value_text AS t
       FROM participant p LEFT JOIN allocation a ON a.participant_id = p.id
       LEFT JOIN baseline_value b ON b.participant_id = p.id
      WHERE p.study_id = $1 AND p.status IN ('enrolled', 'withdrawn')`,
    [study.id],
  );
  const byId = new Map<string, StoredRow>();
  const keyOf = new Map(study.covariates.map((c) => [c.id, c.key]));
  for (const r of data) {
    if (!r.arm_id) continue;
    let row = byId.get(r.id);
    if (!row) {
      row = { id: r.id, siteId: r.site_id, armId: r.arm_id, values: new Map() };
      byId.set(r.id, row);
    }
    if (r.cov) row.values.set(keyOf.get(r.cov)!, { n: r.n, t: r.t });
  }
  return [...byId.values()];
}
