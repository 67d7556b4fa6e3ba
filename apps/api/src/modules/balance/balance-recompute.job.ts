import { randomUUID } from 'node:crypto';
import type PgBoss from 'pg-boss';
import type { Logger } from 'pino';
import { z } from 'zod';
import type { AppContext } from '../../app-context.js';
import { inTransaction } from '../../db/transaction.js';
import type { JobHandler } from '../../jobs/handlers.js';
import { appendAudit } from '../audit/audit.service.js';
import {
  AccumulatorsOutOfStep,
  type AccumulatorSet,
  aggregateAll,
  applyChanges,
  loadAccumulators,
  pendingChangeCount,
  saveAccumulators,
} from './balance-accumulators.js';
import { evaluateAlerts, sendPendingNotifications, systemActor } from './balance-alerts.js';
import type { QuantileSet } from './balance-compute.js';
import { loadStudyConfig, rows } from './balance-config.js';
import { computeQuantiles } from './balance-quantiles.js';
import { buildSnapshot, type SiteReuse } from './balance-snapshot.js';
import { forgetHead } from './balance.service.js';
import { computeWeighting, loadWeightingRows } from './balance-weighting.js';

export const BALANCE_QUEUE = 'balance.recompute';

/** What the enrollment, design and import changes enqueue (singletonKey: studyId). */
export const recomputePayloadSchema = z.object({
  studyId: z.uuid(),
  reason: z.string().max(200).default('change'),
  /** Rebuild the accumulators from all rows (also implied by a design change or a manual request). */
  full: z.boolean().optional(),
  /** Recompute medians and quartiles from all rows in this run (queued after a full rebuild of a large study). */
  quantiles: z.boolean().optional(),
});
export type RecomputePayload = z.input<typeof recomputePayloadSchema>;

/**
 * Medians and quartiles (exact order statistics, one sort per covariate and arm) are recomputed
 * in every run up to this many participants. Above it, runs carry the last ones over (their
 * time is in the snapshot) and a full rebuild queues a separate quantile run, so the moments,
 * SMDs and alerts of a large study are not held up by the sorts.
 */
export const QUANTILES_EVERY_RUN_UP_TO = 20_000;
/** A full rebuild is forced once this share of participants changed since the last one (keeps carried-over quantiles close). */
export const FULL_AFTER_CHANGED_SHARE = 0.05;
/** Above this many changed participants one aggregate pass is cheaper than applying changes one by one. */
const INCREMENTAL_MAX_PARTICIPANTS = 2_000;
// Advisory lock class for "one recompute per study at a time" (the queue's stately policy already tries).
const LOCK_CLASS = 7_261_905;

export type RecomputeHooks = {
  /** Called inside the transaction after the accumulators and the snapshot are written, before alerts (tests). */
  afterSnapshotWrite?: () => Promise<void>;
  /** Called after the transaction committed, before the e-mails are sent (tests). */
  beforeMail?: () => Promise<void>;
  /** Overrides QUANTILES_EVERY_RUN_UP_TO (tests). */
  quantilesEveryRunUpTo?: number;
};

/**
 * Per process: the accumulators and per-site rows of the latest snapshot this process wrote,
 * so the next incremental run need not read them back. Used only while that snapshot is still
 * the study's latest (another worker may have written a newer one).
 */
type Warm = {
  snapshotId: string;
  fingerprint: string;
  designVersion: number;
  set: AccumulatorSet;
  reuse: Omit<SiteReuse, 'dirtySites'>;
};
const warm = new Map<string, Warm>();

export type RecomputeResult = {
  snapshotId: string;
  kind: 'full' | 'incremental';
  enrolled: number;
  changedParticipants: number;
  alertsOpened: number;
  alertsCleared: number;
  mailsSent: number;
  /** Milliseconds per stage, for the logs and the benchmark. */
  timings: Record<string, number>;
};

/**
 * Recomputes a study's balance: updates the accumulators (incrementally from the change log,
 * or from all rows), writes a snapshot, evaluates the alert rules and audits alert changes, all
 * in one transaction; then e-mails the new alerts' notifications. Safe to retry at any point:
 * a run that dies leaves nothing half-written, and notifications already sent are not resent.
 */
export async function recomputeBalance(
  ctx: AppContext,
  input: RecomputePayload,
  opts: { jobId?: string | null; log?: Logger; hooks?: RecomputeHooks } = {},
): Promise<RecomputeResult | null> {
  const payload = recomputePayloadSchema.parse(input);
  let outcome: Omit<RecomputeResult, 'mailsSent'> | null;
  const started = performance.now();
  try {
    outcome = await runInTransaction(ctx, payload, false, opts);
  } catch (err) {
    if (!(err instanceof AccumulatorsOutOfStep)) throw err;
    opts.log?.warn({ err, studyId: payload.studyId }, 'balance accumulators out of step; rebuilding from all rows');
    outcome = await runInTransaction(ctx, payload, true, opts);
  }
  // What a dashboard waits for: the snapshot committed. Alert e-mail is sent after it.
  const committed = performance.now();
  await opts.hooks?.beforeMail?.();
  const config = await loadStudyConfig(ctx.ds, payload.studyId);
  const mailsSent = config ? await sendPendingNotifications(ctx, ctx.ds, config, opts.log) : 0;
  if (!outcome) return null;
  outcome.timings.committed = Math.round((committed - started) * 10) / 10;
  outcome.timings.mail = Math.round((performance.now() - committed) * 10) / 10;
  outcome.timings.total = Math.round((performance.now() - started) * 10) / 10;
  opts.log?.info({ ...outcome, mailsSent, studyId: payload.studyId }, 'balance recomputed');
  return { ...outcome, mailsSent };
}

async function runInTransaction(
  ctx: AppContext,
  payload: z.infer<typeof recomputePayloadSchema>,
  forceFull: boolean,
  opts: { jobId?: string | null; hooks?: RecomputeHooks },
): Promise<Omit<RecomputeResult, 'mailsSent'> | null> {
  const timings: Record<string, number> = {};
  let mark = performance.now();
  let candidate: Warm | null = null;
  const lap = (stage: string) => {
    const now = performance.now();
    timings[stage] = Math.round((now - mark) * 10) / 10;
    mark = now;
  };
  const result = await inTransaction(ctx.ds, async (tx) => {
    await tx.query(`SELECT pg_advisory_xact_lock($1, hashtext($2))`, [LOCK_CLASS, payload.studyId]);
    // Aggregates and quantile sorts over millions of values stay in memory.
    await tx.query(`SET LOCAL work_mem = '128MB'`);
    const config = await loadStudyConfig(tx, payload.studyId);
    if (!config || config.arms.length < 2) return null;
    const [state] = await rows<{
      design_version: number;
      covariate_fingerprint: string;
      changes_since_full: number;
      quantiles: QuantileSet;
      quantiles_computed_at: Date;
    }>(tx, `SELECT * FROM balance_state WHERE study_id = $1 FOR UPDATE`, [config.id]);
    const [{ enrolled: enrolledBefore } = { enrolled: 0 }] = await rows<{ enrolled: number }>(
      tx,
      `SELECT COALESCE(sum((state->>'n')::int), 0)::int AS enrolled FROM balance_accumulator WHERE study_id = $1 AND covariate_key = ''`,
      [config.id],
    );
    const pending = await pendingChangeCount(tx, config.id);
    const full =
      forceFull ||
      payload.full === true ||
      /design|manual|full/i.test(payload.reason) ||
      !state ||
      state.design_version !== config.designVersion ||
      state.covariate_fingerprint !== config.fingerprint ||
      pending > INCREMENTAL_MAX_PARTICIPANTS ||
      state.changes_since_full + pending > Math.max(50, FULL_AFTER_CHANGED_SHARE * enrolledBefore);

    let set: AccumulatorSet;
    let changed = 0;
    // This process's copy of the state the latest snapshot was built from, if it is still the latest.
    const kept = warm.get(config.id);
    warm.delete(config.id);
    let reusable: Omit<SiteReuse, 'dirtySites'> | null = null;
    if (full) {
      set = await aggregateAll(tx, config);
    } else {
      const [latestSnapshot] = await rows<{ id: string }>(
        tx,
        `SELECT id FROM balance_snapshot WHERE study_id = $1 ORDER BY computed_at DESC LIMIT 1`,
        [config.id],
      );
      if (kept && latestSnapshot && kept.snapshotId === latestSnapshot.id && kept.fingerprint === config.fingerprint && kept.designVersion === config.designVersion) {
        set = kept.set;
        reusable = kept.reuse;
      } else {
        set = await loadAccumulators(tx, config.id);
      }
      changed = await applyChanges(tx, config, set);
    }
    lap('accumulators');
    const dirtySites = new Set([...set.dirty].map((id) => set.cells.get(id)?.key.siteId ?? id.split('|')[0]!));
    await saveAccumulators(tx, config.id, set, full);
    let reuse: SiteReuse | null = null;
    if (!full && !reusable) {
      const [prev] = await rows<{ grid: SiteReuse['grid'] | null; trend_sites: SiteReuse['trendSites'] | null; pooled_sites: SiteReuse['pooledSites'] | null }>(
        tx,
        `SELECT result -> 'siteGrid' AS grid, trend -> 'sites' AS trend_sites, pooled -> 'sites' AS pooled_sites
           FROM balance_snapshot WHERE study_id = $1 AND design_version = $2 ORDER BY computed_at DESC LIMIT 1`,
        [config.id, config.designVersion],
      );
      if (prev?.grid && prev.trend_sites && prev.pooled_sites) {
        reusable = { grid: prev.grid, trendSites: prev.trend_sites, pooledSites: prev.pooled_sites };
      }
    }
    if (!full && reusable) reuse = { dirtySites, ...reusable };

    lap('save');
    const now = new Date();
    const enrolledNow = [...set.cells.values()]
      .filter((c) => c.key.covariateKey === '')
      .reduce((s, c) => s + c.acc.n, 0);
    let quantiles: QuantileSet;
    let quantilesAt: Date;
    if (!state || enrolledNow <= (opts.hooks?.quantilesEveryRunUpTo ?? QUANTILES_EVERY_RUN_UP_TO) || payload.quantiles === true) {
      quantiles = await computeQuantiles(tx, config);
      quantilesAt = now;
    } else {
      quantiles = state.quantiles;
      quantilesAt = new Date(state.quantiles_computed_at);
      if (full) {
        await ctx.jobs.send(tx, BALANCE_QUEUE, { studyId: config.id, reason: 'quantiles', quantiles: true }, { singletonKey: `quantiles:${config.id}` });
      }
    }
    lap('quantiles');
    const weighting = config.kind === 'observational_cohort' ? computeWeighting(config, await loadWeightingRows(tx, config)) : null;

    const snapshotId = randomUUID();
    const kind: 'full' | 'incremental' = full ? 'full' : 'incremental';
    const built = buildSnapshot(
      config,
      set,
      quantiles,
      { id: snapshotId, computedAt: now.toISOString(), kind, reason: payload.reason, quantilesComputedAt: quantilesAt.toISOString() },
      weighting,
      reuse,
    );
    lap('build');
    candidate = {
      snapshotId,
      fingerprint: config.fingerprint,
      designVersion: config.designVersion,
      set,
      reuse: { grid: built.body.siteGrid ?? [], trendSites: built.trend.sites, pooledSites: built.pooled.sites },
    };
    await tx.query(
      `INSERT INTO balance_snapshot (id, study_id, computed_at, kind, reason, design_version, enrolled_count, result, pooled, trend)
       VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10)`,
      [
        snapshotId, config.id, now, kind, payload.reason, config.designVersion, built.enrolled,
        JSON.stringify(built.body), JSON.stringify(built.pooled), JSON.stringify(built.trend),
      ],
    );
    await tx.query(
      `INSERT INTO balance_state (study_id, design_version, covariate_fingerprint, last_full_at, changes_since_full, quantiles, quantiles_computed_at, updated_at)
       VALUES ($1, $2, $3, $4, 0, $5, $6, $4)
       ON CONFLICT (study_id) DO UPDATE SET design_version = EXCLUDED.design_version,
         covariate_fingerprint = EXCLUDED.covariate_fingerprint,
         last_full_at = CASE WHEN $7 THEN EXCLUDED.last_full_at ELSE balance_state.last_full_at END,
         changes_since_full = CASE WHEN $7 THEN 0 ELSE balance_state.changes_since_full + $8 END,
         quantiles = EXCLUDED.quantiles, quantiles_computed_at = EXCLUDED.quantiles_computed_at, updated_at = EXCLUDED.updated_at`,
      [config.id, config.designVersion, config.fingerprint, now, JSON.stringify(quantiles), quantilesAt, full, changed],
    );
    lap('write');
    await opts.hooks?.afterSnapshotWrite?.();

    const { changes, audit } = await evaluateAlerts(tx, config, snapshotId, built.body, built.sites);
    // Last: the audit append takes the chain lock until commit.
    await appendAudit(tx, systemActor(opts.jobId ?? null), audit);
    lap('alerts');
    return {
      timings,
      snapshotId,
      kind,
      enrolled: built.enrolled,
      changedParticipants: changed,
      alertsOpened: changes.opened.length,
      alertsCleared: changes.cleared.length,
    };
  });
  // Only a committed run's state may be reused; a failed run leaves nothing behind to reuse.
  if (candidate) warm.set(payload.studyId, candidate);
  forgetHead(payload.studyId);
  return result;
}

/** The pg-boss handler for 'balance.recompute'. */
export const balanceRecomputeHandler: JobHandler = {
  queue: BALANCE_QUEUE,
  async handle(ctx, jobs: PgBoss.Job<object>[], log) {
    for (const job of jobs) {
      await recomputeBalance(ctx, job.data as RecomputePayload, { jobId: job.id, log });
    }
  },
};
