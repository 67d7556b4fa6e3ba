import {
  balanceCautions,
  type BalanceArmsView,
  type BalancePooledView,
  type BalanceRules,
  type Weighting,
} from '@counterpoise/contracts/balance';
import type { AccumulatorSet } from './balance-accumulators.js';
import { allScopes, chanceCrossings, covariateBalance, scopeCells, type QuantileSet } from './balance-compute.js';
import { CHANCE_LEVEL, type StudyConfig } from './balance-config.js';

/** What the recompute stores: the arm-level view (minus freshness), per-site details, the pooled view and the trend. */
export type SnapshotBody = Omit<BalanceArmsView, 'freshness'>;
export type PooledBody = Omit<BalancePooledView, 'freshness'>;
/** Compact history point: covariate key -> [armId, smd, halfWidth][]; overall and per site. */
export type TrendPoint = [string, number | null, number | null];
export type Trend = { overall: Record<string, TrendPoint[]>; sites: Record<string, Record<string, TrendPoint[]>> };

export type SnapshotMeta = {
  id: string;
  computedAt: string;
  kind: 'full' | 'incremental';
  reason: string;
  quantilesComputedAt: string;
};

export function rulesOf(config: StudyConfig): BalanceRules {
  return { ...config.rules, chanceLevel: CHANCE_LEVEL };
}

export function cautionsFor(config: StudyConfig, withWeighting: boolean): string[] {
  const list: string[] = [];
  if (config.kind === 'randomized_trial') list.push(balanceCautions.randomizedImbalance);
  list.push(balanceCautions.smallSites, balanceCautions.withdrawn);
  if (withWeighting) list.push(balanceCautions.weighting);
  list.push(balanceCautions.judgement);
  return list;
}

export function comparisonNoteFor(config: StudyConfig): string | null {
  if (config.arms.length <= 2) return null;
  const ref = config.arms[0]!;
  return `With ${config.arms.length} arms, each arm is compared pairwise with the reference arm ${ref.code} (${ref.name}); SMDs are arm minus ${ref.code}.`;
}

/**
 * What an incremental run may take over from the previous snapshot for the sites whose cells it
 * did not change: their grid row, trend and pooled row. Those sites are then not rebuilt (and
 * their alerts not re-evaluated: nothing about them changed).
 */
export type SiteReuse = {
  dirtySites: Set<string>;
  grid: NonNullable<SnapshotBody['siteGrid']>;
  trendSites: Trend['sites'];
  pooledSites: PooledBody['sites'];
};

export function buildSnapshot(
  config: StudyConfig,
  set: AccumulatorSet,
  quantiles: QuantileSet | null,
  meta: SnapshotMeta,
  weighting: Weighting | null,
  reuse: SiteReuse | null = null,
): { body: SnapshotBody; sites: Map<string, SnapshotBody>; pooled: PooledBody; trend: Trend; enrolled: number } {
  const rules = rulesOf(config);
  const ref = config.arms[0]!;
  const scopes = allScopes(set);
  const overall = scopes.overall;
  const enrolled = [...overall.participants.values()].reduce((s, n) => s + n, 0);
  const covariates = config.covariates.map((cov) => ({
    key: cov.key,
    label: cov.label,
    kind: cov.kind,
    unit: cov.unit,
    levels: cov.levels,
    isAdjustment: cov.isAdjustment,
    isStratification: cov.isStratification,
    balance: covariateBalance(config, rules, cov, overall, quantiles),
  }));

  // Chance crossings across all covariates, summed over the comparisons with the reference arm.
  let expected: number | null = null;
  let atLeastOne: number | null = null;
  let observed = 0;
  config.arms.slice(1).forEach((arm, i) => {
    const nArm = overall.participants.get(arm.id) ?? 0;
    const nRef = overall.participants.get(ref.id) ?? 0;
    const c = chanceCrossings(config.covariates.length, nArm, nRef, rules.smdThreshold);
    if (c) {
      expected = (expected ?? 0) + c.expected;
      atLeastOne = config.arms.length === 2 ? c.probabilityAtLeastOne : null;
    }
    for (const cv of covariates) if (cv.balance.comparisons[i]?.flags.smdOverThreshold) observed++;
  });

  const siteCounts = (siteId: string, participants: Map<string, number>) => {
    const site = config.sites.find((s) => s.id === siteId)!;
    const nByArm = config.arms.map((a) => ({ armId: a.id, n: participants.get(a.id) ?? 0 }));
    return {
      siteId,
      code: site.code,
      name: site.name,
      enrolled: nByArm.reduce((s, x) => s + x.n, 0),
      nByArm,
      judgeable: nByArm.every((x) => x.n >= rules.minPerArmForSiteAlerts),
    };
  };

  const snapshotMeta = {
    id: meta.id,
    computedAt: meta.computedAt,
    kind: meta.kind,
    reason: meta.reason,
    designVersion: config.designVersion,
    enrolledCount: enrolled,
    studyKind: config.kind,
    quantilesComputedAt: meta.quantilesComputedAt,
  };
  const common = {
    view: 'arms' as const,
    snapshot: snapshotMeta,
    arms: config.arms,
    referenceArmId: ref.id,
    comparisonNote: comparisonNoteFor(config),
    rules,
  };
  const cautions = cautionsFor(config, weighting !== null);

  const trend: Trend = { overall: {}, sites: {} };
  for (const cv of covariates) {
    trend.overall[cv.key] = cv.balance.comparisons.map((c) => [c.armId, c.smd, c.chanceBand?.halfWidth ?? null]);
  }

  const sites = new Map<string, SnapshotBody>();
  const siteGrid: NonNullable<SnapshotBody['siteGrid']> = [];
  const reusedPooled = new Map<string, PooledBody['sites'][number]>();
  for (const site of config.sites) {
    if (reuse && !reuse.dirtySites.has(site.id)) {
      const row = reuse.grid.find((g) => g.siteId === site.id);
      const trendRow = reuse.trendSites[site.id];
      const pooledRow = reuse.pooledSites.find((p) => p.siteId === site.id);
      if (row && trendRow && pooledRow) {
        siteGrid.push(row);
        trend.sites[site.id] = trendRow;
        reusedPooled.set(site.id, pooledRow);
        continue;
      }
    }
    const cells = scopes.bySite.get(site.id) ?? scopeCells(set, site.id);
    const counts = siteCounts(site.id, cells.participants);
    // Per-site medians are not kept (only mean and SD): quantiles are for the overall table.
    const siteCovariates = config.covariates.map((cov) => ({
      key: cov.key,
      label: cov.label,
      kind: cov.kind,
      unit: cov.unit,
      levels: cov.levels,
      isAdjustment: cov.isAdjustment,
      isStratification: cov.isStratification,
      balance: covariateBalance(config, rules, cov, cells, null),
    }));
    trend.sites[site.id] = {};
    for (const cv of siteCovariates) {
      trend.sites[site.id]![cv.key] = cv.balance.comparisons.map((c) => [c.armId, c.smd, c.chanceBand?.halfWidth ?? null]);
    }
    siteGrid.push({
      ...counts,
      cells: siteCovariates.map((cv) => ({
        key: cv.key,
        comparisons: cv.balance.comparisons.map((c) => ({
          armId: c.armId,
          smd: c.smd,
          halfWidth: c.chanceBand?.halfWidth ?? null,
          flags: c.flags,
        })),
      })),
    });
    let siteExpected: number | null = null;
    let siteObserved = 0;
    config.arms.slice(1).forEach((arm, i) => {
      const c = chanceCrossings(
        config.covariates.length,
        cells.participants.get(arm.id) ?? 0,
        cells.participants.get(ref.id) ?? 0,
        rules.smdThreshold,
      );
      if (c) siteExpected = (siteExpected ?? 0) + c.expected;
      for (const cv of siteCovariates) if (cv.balance.comparisons[i]?.flags.smdOverThreshold) siteObserved++;
    });
    sites.set(site.id, {
      ...common,
      scope: { siteId: site.id },
      chance: {
        covariateCount: config.covariates.length,
        threshold: rules.smdThreshold,
        expected: siteExpected,
        probabilityAtLeastOne: null,
        observed: siteObserved,
      },
      covariates: siteCovariates,
      siteGrid: null,
      site: counts,
      weighting: null,
      cautions,
    });
  }

  const body: SnapshotBody = {
    ...common,
    scope: { siteId: null },
    chance: {
      covariateCount: config.covariates.length,
      threshold: rules.smdThreshold,
      expected,
      probabilityAtLeastOne: atLeastOne,
      observed,
    },
    covariates,
    siteGrid,
    site: null,
    weighting,
    cautions,
  };

  // Blinded figures: site enrollment, completeness and distributions pooled over the arms.
  const completenessOf = (counts: { n: number; missing: number }[]) => {
    const total = counts.reduce((s, c) => s + c.n + c.missing, 0);
    return total > 0 ? (100 * counts.reduce((s, c) => s + c.n, 0)) / total : null;
  };
  const requiredKeys = new Set(config.covariates.filter((c) => c.required).map((c) => c.key));
  const pooled: PooledBody = {
    view: 'pooled',
    computedAt: meta.computedAt,
    targetSampleSize: config.targetSampleSize,
    enrolled,
    sites: config.sites.map((site) => {
      const reused = reusedPooled.get(site.id);
      if (reused) return reused;
      const row = siteGrid.find((g) => g.siteId === site.id)!;
      const detail = sites.get(site.id)!;
      return {
        siteId: site.id,
        code: site.code,
        name: site.name,
        enrollmentTarget: site.enrollmentTarget,
        enrolled: row.enrolled,
        completeness: completenessOf(
          detail.covariates.filter((c) => requiredKeys.has(c.key)).map((c) => c.balance.pooled),
        ),
      };
    }),
    covariates: covariates.map(({ balance, ...metaOnly }) => ({
      ...metaOnly,
      pooled: balance.pooled,
      completeness: completenessOf([balance.pooled]),
    })),
    cautions: [balanceCautions.withdrawn, balanceCautions.judgement],
  };

  return { body, sites, pooled, trend, enrolled };
}
