import {
  balanceCautions,
  type Alert,
  type BalanceArmsView,
  type BaselineTable,
  type CovariateSummary,
  type Freshness,
} from '@counterpoise/contracts/balance';
import type { DataSource } from 'typeorm';
import { loadAccumulators } from './balance-accumulators.js';
import { armSql, codeValue, loadStudyConfig, rows, type CovariateKind, type Queryable } from './balance-config.js';
import { continuousPValue, contingencyPValue, PVALUE_METHOD } from './balance-pvalues.js';
import { buildSnapshot, type SnapshotBody } from './balance-snapshot.js';

/** Queued or running recompute jobs of this study (pg-boss keeps them in its own schema). */
export async function recomputePending(db: Queryable, studyId: string): Promise<boolean> {
  const [r] = await rows<{ pending: boolean }>(
    db,
    `SELECT EXISTS (
       SELECT 1 FROM pgboss.job
        WHERE name = 'balance.recompute' AND singleton_key IN ($1, 'full:' || $1, 'quantiles:' || $1)
          AND state IN ('created', 'retry', 'active')) AS pending`,
    [studyId],
  );
  return r?.pending ?? false;
}

export async function freshness(db: Queryable, studyId: string, computedAt: Date | null, enrolled: number | null): Promise<Freshness> {
  return {
    computedAt: computedAt ? computedAt.toISOString() : null,
    recomputePending: await recomputePending(db, studyId),
    enrolledCount: enrolled,
  };
}

export type SnapshotHead = { id: string; computedAt: Date; enrolled: number; pending: boolean };

/**
 * How long a looked-up head may be reused by this process: dashboards poll, and under load one
 * query per poll per client is the largest cost left. Freshness is then at most this stale.
 */
export const HEAD_TTL_MS = 250;
const heads = new Map<string, { at: number; head: SnapshotHead }>();

/** Forgets the cached head (after this process queued a job or wrote a snapshot). */
export function forgetHead(studyId: string): void {
  heads.delete(studyId);
  headLookups.delete(studyId);
}

const headLookups = new Map<string, Promise<SnapshotHead | null>>();

/** latestHead, reused for HEAD_TTL_MS; concurrent requests share one lookup. */
export async function latestHeadCached(db: Queryable, studyId: string): Promise<SnapshotHead | null> {
  const hit = heads.get(studyId);
  if (hit && performance.now() - hit.at < HEAD_TTL_MS) return hit.head;
  let lookup = headLookups.get(studyId);
  if (!lookup) {
    const started = latestHead(db, studyId)
      .then((head) => {
        // Not if forgetHead ran meanwhile (this process queued a job or wrote a snapshot).
        if (head && headLookups.get(studyId) === started) {
          if (heads.size > 1000) heads.clear();
          heads.set(studyId, { at: performance.now(), head });
        }
        return head;
      })
      .finally(() => {
        if (headLookups.get(studyId) === started) headLookups.delete(studyId);
      });
    lookup = started;
    headLookups.set(studyId, started);
  }
  return lookup;
}

/** The latest snapshot's id and time, and whether a recompute is pending, in one round trip. */
export async function latestHead(db: Queryable, studyId: string): Promise<SnapshotHead | null> {
  const [r] = await rows<{ id: string; computed_at: Date; enrolled_count: number; pending: boolean }>(
    db,
    `SELECT s.id, s.computed_at, s.enrolled_count,
            EXISTS (SELECT 1 FROM pgboss.job j WHERE j.name = 'balance.recompute' AND j.singleton_key IN ($2, 'full:' || $2, 'quantiles:' || $2)
                      AND j.state IN ('created', 'retry', 'active')) AS pending
       FROM balance_snapshot s WHERE s.study_id = $1 ORDER BY s.computed_at DESC LIMIT 1`,
    [studyId, studyId],
  );
  return r ? { id: r.id, computedAt: r.computed_at, enrolled: r.enrolled_count, pending: r.pending } : null;
}

/**
 * Stored snapshot texts by snapshot id: a snapshot never changes once written, so the hot
 * GET /balance path only checks which snapshot is the latest and sends the cached text.
 */
const textCache = new Map<string, { snapshotId: string; text: string }>();
const CACHE_ENTRIES = 200;

async function cached(key: string, snapshotId: string, load: () => Promise<string | null>): Promise<string | null> {
  const hit = textCache.get(key);
  if (hit && hit.snapshotId === snapshotId) return hit.text;
  const text = await load();
  if (text === null) return null;
  if (textCache.size >= CACHE_ENTRIES) textCache.delete(textCache.keys().next().value as string);
  textCache.set(key, { snapshotId, text });
  return text;
}

/** The arm-level view of snapshot `head` as JSON text: stored for the overall scope, rebuilt from the accumulators for one site. */
export async function armsText(ds: DataSource, studyId: string, siteId: string | null, head: SnapshotHead): Promise<string | null> {
  if (!siteId) {
    return cached(`${studyId}|arms`, head.id, async () => {
      const [r] = await rows<{ text: string }>(ds, `SELECT result::text AS text FROM balance_snapshot WHERE id = $1`, [head.id]);
      return r?.text ?? null;
    });
  }
  return cached(`${studyId}|arms|${siteId}`, head.id, async () => {
    // One consistent read: the accumulators are written in the same transaction as the snapshot.
    const built = await ds.transaction('REPEATABLE READ', async (tx) => {
      const [meta] = await rows<{ meta: SnapshotBody['snapshot'] }>(
        tx,
        `SELECT result -> 'snapshot' AS meta FROM balance_snapshot WHERE study_id = $1 ORDER BY computed_at DESC LIMIT 1`,
        [studyId],
      );
      const config = await loadStudyConfig(tx, studyId);
      if (!meta || !config) return null;
      const set = await loadAccumulators(tx, studyId, siteId);
      return buildSnapshot(
        config,
        set,
        null,
        { id: meta.meta.id, computedAt: meta.meta.computedAt, kind: meta.meta.kind, reason: meta.meta.reason, quantilesComputedAt: meta.meta.quantilesComputedAt },
        null,
      ).sites.get(siteId);
    });
    return built ? JSON.stringify(built) : null;
  });
}

export async function pooledText(db: Queryable, studyId: string, head: SnapshotHead): Promise<string | null> {
  return cached(`${studyId}|pooled`, head.id, async () => {
    const [r] = await rows<{ text: string }>(db, `SELECT pooled::text AS text FROM balance_snapshot WHERE id = $1`, [head.id]);
    return r?.text ?? null;
  });
}

type AlertRow = {
  id: string;
  rule: Alert['rule'];
  covariate_key: string;
  covariate_label: string | null;
  site_id: string | null;
  site_code: string | null;
  arm_id: string;
  reference_arm_id: string;
  state: Alert['state'];
  opening: number;
  opened_at: Date;
  acknowledged_at: Date | null;
  acknowledged_by: string | null;
  acknowledged_email: string | null;
  acknowledge_comment: string | null;
  cleared_at: Date | null;
  last_evaluated_at: Date;
  last_smd: number | null;
  last_variance_ratio: number | null;
  last_half_width: number | null;
  last_n_arm: number;
  last_n_reference: number;
};

export const alertSelect = `
  SELECT a.id, a.rule, a.covariate_key, c.label AS covariate_label, a.site_id, s.code AS site_code, a.arm_id,
         a.reference_arm_id, a.state, a.opening, a.opened_at, a.acknowledged_at, a.acknowledged_by,
         u.email AS acknowledged_email, a.acknowledge_comment, a.cleared_at, a.last_evaluated_at, a.last_smd,
         a.last_variance_ratio, a.last_half_width, a.last_n_arm, a.last_n_reference
    FROM alert a
    LEFT JOIN covariate_definition c ON c.study_id = a.study_id AND c.key = a.covariate_key
    LEFT JOIN site s ON s.id = a.site_id
    LEFT JOIN app_user u ON u.id = a.acknowledged_by`;

export function alertDto(r: AlertRow): Alert {
  return {
    id: r.id,
    rule: r.rule,
    covariateKey: r.covariate_key,
    covariateLabel: r.covariate_label ?? r.covariate_key,
    siteId: r.site_id,
    siteCode: r.site_code,
    armId: r.arm_id,
    referenceArmId: r.reference_arm_id,
    state: r.state,
    opening: r.opening,
    openedAt: r.opened_at.toISOString(),
    acknowledgedAt: r.acknowledged_at?.toISOString() ?? null,
    acknowledgedBy: r.acknowledged_by ? { id: r.acknowledged_by, email: r.acknowledged_email ?? '' } : null,
    comment: r.acknowledge_comment,
    clearedAt: r.cleared_at?.toISOString() ?? null,
    lastEvaluatedAt: r.last_evaluated_at.toISOString(),
    lastSmd: r.last_smd,
    lastVarianceRatio: r.last_variance_ratio,
    lastHalfWidth: r.last_half_width,
    lastNArm: r.last_n_arm,
    lastNReference: r.last_n_reference,
  };
}

export async function listAlerts(db: Queryable, studyId: string, state?: string): Promise<Alert[]> {
  const filter =
    state === 'active' ? `AND a.state IN ('open', 'acknowledged')` : state ? `AND a.state = $2` : '';
  const data = await rows<AlertRow>(
    db,
    `${alertSelect} WHERE a.study_id = $1 ${filter} ORDER BY a.opened_at DESC, a.covariate_key`,
    state && state !== 'active' ? [studyId, state] : [studyId],
  );
  return data.map(alertDto);
}

const num = (x: number | null, digits: number) => (x === null ? '—' : x.toFixed(digits));
const digitsFor = (x: number | null) => (x !== null && Math.abs(x) >= 100 ? 0 : x !== null && Math.abs(x) >= 10 ? 1 : 2);

function participantsOf(s: CovariateSummary | undefined): number {
  return s ? s.n + s.missing : 0;
}

/**
 * The baseline table (CONSORT item 15 layout): one column per arm and one overall; mean (SD)
 * and median [IQR] for continuous covariates, n (%) per level otherwise, and missing counts.
 */
export function baselineTable(view: BalanceArmsView): Omit<BaselineTable, 'freshness' | 'pValues'> {
  const columns = [
    ...view.arms.map((a) => ({
      column: a.id,
      label: `${a.code} (${a.name})`,
      n: participantsOf(view.covariates[0]?.balance.byArm.find((b) => b.armId === a.id)?.summary),
    })),
    { column: 'overall', label: 'Overall', n: participantsOf(view.covariates[0]?.balance.pooled) },
  ];
  const tableRows: BaselineTable['rows'] = [];
  for (const cov of view.covariates) {
    const cellsOf = (f: (s: CovariateSummary) => { text: string; n: number }) => [
      ...view.arms.map((a) => {
        const s = cov.balance.byArm.find((b) => b.armId === a.id)!.summary;
        return { column: a.id, ...f(s) };
      }),
      { column: 'overall', ...f(cov.balance.pooled) },
    ];
    const label = cov.unit ? `${cov.label} (${cov.unit})` : cov.label;
    if (cov.kind === 'continuous') {
      tableRows.push({
        covariateKey: cov.key,
        label,
        statistic: 'mean_sd',
        level: null,
        cells: cellsOf((s) => ({ text: `${num(s.mean, digitsFor(s.mean))} (${num(s.sd, digitsFor(s.sd))})`, n: s.n })),
      });
      tableRows.push({
        covariateKey: cov.key,
        label,
        statistic: 'median_iqr',
        level: null,
        cells: cellsOf((s) => ({
          text: s.median === null ? '—' : `${num(s.median, digitsFor(s.median))} [${num(s.q1, digitsFor(s.q1))}, ${num(s.q3, digitsFor(s.q3))}]`,
          n: s.n,
        })),
      });
    } else {
      const levels = cov.kind === 'binary' ? ['1'] : (cov.balance.pooled.levels ?? []).map((l) => l.level);
      for (const level of levels) {
        tableRows.push({
          covariateKey: cov.key,
          label,
          statistic: 'level',
          level: cov.kind === 'binary' ? 'yes' : level,
          cells: cellsOf((s) => {
            const l = s.levels?.find((x) => x.level === level);
            return { text: l ? `${l.n} (${num(l.percent, 1)}%)` : '0', n: l?.n ?? 0 };
          }),
        });
      }
    }
    tableRows.push({
      covariateKey: cov.key,
      label,
      statistic: 'missing',
      level: null,
      cells: cellsOf((s) => ({ text: String(s.missing), n: s.missing })),
    });
  }
  const cautions = [...view.cautions];
  if (view.scope.siteId) cautions.unshift('Medians and quartiles are kept for the overall table only; a site table shows mean (SD).');
  return { scope: view.scope, columns, rows: tableRows, cautions };
}

/**
 * Baseline p-values, only on request and always labelled (DOMAIN.md caution 1), each arm
 * against the reference arm, on the rows stored now (see PVALUE_METHOD for the tests).
 * One statement reads the study's baseline rows: continuous values as one array per (covariate,
 * arm) (the ANOVA needs the values; an array parses much faster than a row per value), binary
 * and categorical values already counted per (covariate, arm, raw value), so only a handful of
 * rows per covariate come back; each count group is decoded with `codeValue`, the same rule the
 * balance figures use.
 */
export async function baselinePValues(
  db: Queryable,
  studyId: string,
  kind: 'randomized_trial' | 'observational_cohort',
  view: BalanceArmsView,
): Promise<NonNullable<BaselineTable['pValues']>> {
  const joins = `FROM participant p LEFT JOIN allocation a ON a.participant_id = p.id
       JOIN baseline_value b ON b.participant_id = p.id
       JOIN covariate_definition c ON c.id = b.covariate_id AND c.study_id = $1`;
  const counted = `p.study_id = $1 AND p.status IN ('enrolled', 'withdrawn') AND ${armSql(kind)} IS NOT NULL
        AND ($2::uuid IS NULL OR p.site_id = $2)`;
  const data = await rows<{
    key: string;
    kind: CovariateKind;
    arm_id: string;
    numbers: number[] | null;
    n: number | null;
    t: string | null;
    count: number;
  }>(
    db,
    `SELECT c.key, c.kind, ${armSql(kind)} AS arm_id, array_agg(b.value_number) AS numbers,
            NULL::float8 AS n, NULL::text AS t, count(*)::int AS count
       ${joins} AND c.kind = 'continuous'
      WHERE ${counted} AND b.value_number IS NOT NULL
      GROUP BY 1, 2, 3
     UNION ALL
     SELECT c.key, c.kind, ${armSql(kind)}, NULL, b.value_number, b.value_text, count(*)::int
       ${joins} AND c.kind <> 'continuous'
      WHERE ${counted}
      GROUP BY 1, 2, 3, 5, 6`,
    [studyId, view.scope.siteId],
  );
  const numbers = new Map<string, number[]>();
  const levels = new Map<string, Map<string, number>>();
  for (const r of data) {
    const k = `${r.key}|${r.arm_id}`;
    if (r.numbers) {
      // float8 arrays come back in PostgreSQL's shortest exact text form, so no digit is lost.
      numbers.set(k, r.numbers.filter((x) => codeValue('continuous', x, null) !== null));
      continue;
    }
    const v = codeValue(r.kind, r.n, r.t);
    if (v === null) continue;
    let counts = levels.get(k);
    if (!counts) levels.set(k, (counts = new Map()));
    const level = String(v);
    counts.set(level, (counts.get(level) ?? 0) + r.count);
  }
  const empty = new Map<string, number>();
  const values: NonNullable<BaselineTable['pValues']>['values'] = [];
  for (const cov of view.covariates) {
    const levelLabel = cov.kind === 'binary' ? (l: string) => (l === '1' ? 'yes' : 'no') : (l: string) => l;
    for (const c of cov.balance.comparisons) {
      const armKey = `${cov.key}|${c.armId}`;
      const refKey = `${cov.key}|${c.referenceArmId}`;
      const entry =
        cov.kind === 'continuous'
          ? continuousPValue(numbers.get(armKey) ?? [], numbers.get(refKey) ?? [])
          : contingencyPValue(levels.get(armKey) ?? empty, levels.get(refKey) ?? empty, levelLabel);
      values.push({ covariateKey: cov.key, armId: c.armId, referenceArmId: c.referenceArmId, ...entry });
    }
  }
  return { caution: balanceCautions.consortPValues, method: PVALUE_METHOD, values };
}
