import type {
  ArmComparison,
  BalanceFlags,
  BalanceRules,
  CovariateBalance,
  CovariateSummary,
} from '@counterpoise/contracts/balance';
import {
  categoricalSmd,
  expectedChanceExceedances,
  MomentAccumulator,
  smdChanceBand,
  standardizedMeanDifferenceFromSummaries,
} from '@counterpoise/stats';
import type { AccumulatorSet, CellKey } from './balance-accumulators.js';
import { CHANCE_LEVEL, type CovariateInfo, type StudyConfig } from './balance-config.js';

/** Medians, quartiles and range per covariate: per arm and pooled (overall scope only). */
export type QuantileSet = Record<
  string,
  { byArm: Record<string, Quantiles>; pooled: Quantiles | undefined }
>;
export type Quantiles = { median: number; q1: number; q3: number; min: number; max: number };

/** One scope (all sites, or one site): merged accumulators per arm and covariate. */
export type ScopeCells = {
  participants: Map<string, number>;
  moments: Map<string, Map<string, MomentAccumulator>>; // covariate -> arm -> acc
  levels: Map<string, Map<string, Map<string, number>>>; // covariate -> arm -> level -> count
};

const emptyScope = (): ScopeCells => ({ participants: new Map(), moments: new Map(), levels: new Map() });

/** The overall scope and every site's, in one pass over the cells. */
export function allScopes(set: AccumulatorSet): { overall: ScopeCells; bySite: Map<string, ScopeCells> } {
  const overall = emptyScope();
  const bySite = new Map<string, ScopeCells>();
  for (const cell of set.cells.values()) {
    if (cell.acc.n === 0) continue;
    let site = bySite.get(cell.key.siteId);
    if (!site) {
      site = emptyScope();
      bySite.set(cell.key.siteId, site);
    }
    addCell(site, cell.key, cell.acc);
    addCell(overall, cell.key, cell.acc);
  }
  return { overall, bySite };
}

export function scopeCells(set: AccumulatorSet, siteId: string | null): ScopeCells {
  const scope = emptyScope();
  for (const { key, acc } of set.cells.values()) {
    if (siteId !== null && key.siteId !== siteId) continue;
    if (acc.n === 0) continue;
    addCell(scope, key, acc);
  }
  return scope;
}

function addCell(scope: ScopeCells, key: CellKey, acc: MomentAccumulator): void {
  const { participants, moments, levels } = scope;
  {
    if (key.covariateKey === '') {
      participants.set(key.armId, (participants.get(key.armId) ?? 0) + acc.n);
    } else if (key.level === '') {
      const byArm = moments.get(key.covariateKey) ?? new Map<string, MomentAccumulator>();
      moments.set(key.covariateKey, byArm);
      const existing = byArm.get(key.armId);
      // Chan et al. merge of the per-site states gives the overall state.
      if (existing) existing.merge(acc);
      else byArm.set(key.armId, acc.clone());
    } else {
      const byArm = levels.get(key.covariateKey) ?? new Map<string, Map<string, number>>();
      levels.set(key.covariateKey, byArm);
      const counts = byArm.get(key.armId) ?? new Map<string, number>();
      byArm.set(key.armId, counts);
      counts.set(key.level, (counts.get(key.level) ?? 0) + acc.n);
    }
  }
}

const safe = <T>(f: () => T): T | null => {
  try {
    return f();
  } catch (err) {
    if (err instanceof RangeError) return null;
    throw err;
  }
};

function orderedLevels(cov: CovariateInfo, counts: Map<string, number>[]): string[] {
  const declared = cov.levels ?? [];
  const seen = new Set<string>();
  for (const c of counts) for (const [l, n] of c) if (n > 0) seen.add(l);
  const extra = [...seen].filter((l) => !declared.includes(l)).sort();
  return [...declared, ...extra];
}

function summaryOf(
  cov: CovariateInfo,
  participants: number,
  acc: MomentAccumulator | undefined,
  levelCounts: Map<string, number> | undefined,
  allLevels: string[],
  q: Quantiles | undefined,
): CovariateSummary {
  if (cov.kind === 'categorical') {
    const counts = levelCounts ?? new Map<string, number>();
    let n = 0;
    for (const v of counts.values()) n += v;
    return {
      n,
      missing: Math.max(0, participants - n),
      mean: null,
      sd: null,
      median: null,
      q1: null,
      q3: null,
      min: null,
      max: null,
      levels: allLevels.map((l) => {
        const k = counts.get(l) ?? 0;
        return { level: l, n: k, percent: n > 0 ? (100 * k) / n : null };
      }),
    };
  }
  const n = acc?.n ?? 0;
  const mean = n > 0 && acc ? acc.mean : null;
  const sd = acc ? safe(() => acc.sd) : null;
  const base: CovariateSummary = {
    n,
    missing: Math.max(0, participants - n),
    mean,
    sd,
    median: q?.median ?? null,
    q1: q?.q1 ?? null,
    q3: q?.q3 ?? null,
    min: q?.min ?? null,
    max: q?.max ?? null,
    levels: null,
  };
  if (cov.kind === 'binary') {
    // mean * n is the count of ones up to rounding of the running mean.
    const ones = mean === null ? 0 : Math.round(mean * n);
    base.median = null;
    base.q1 = null;
    base.q3 = null;
    base.min = null;
    base.max = null;
    base.levels = [
      { level: '0', n: n - ones, percent: n > 0 ? (100 * (n - ones)) / n : null },
      { level: '1', n: ones, percent: n > 0 ? (100 * ones) / n : null },
    ];
  }
  return base;
}

export function flagsFor(
  rules: BalanceRules,
  smd: number | null,
  varianceRatio: number | null,
  halfWidth: number | null,
): BalanceFlags {
  return {
    smdOverThreshold: smd !== null && Math.abs(smd) > rules.smdThreshold,
    beyondChance: smd !== null && halfWidth !== null && Math.abs(smd) > halfWidth,
    varianceRatioOutside:
      varianceRatio !== null && (varianceRatio < rules.varianceRatio[0] || varianceRatio > rules.varianceRatio[1]),
  };
}

function compare(
  cov: CovariateInfo,
  rules: BalanceRules,
  armId: string,
  refId: string,
  cells: ScopeCells,
): ArmComparison {
  const notes: string[] = [];
  let smd: number | null = null;
  let vr: number | null = null;
  let nArm = 0;
  let nRef = 0;
  if (cov.kind === 'categorical') {
    const a = cells.levels.get(cov.key)?.get(armId) ?? new Map<string, number>();
    const r = cells.levels.get(cov.key)?.get(refId) ?? new Map<string, number>();
    for (const v of a.values()) nArm += v;
    for (const v of r.values()) nRef += v;
    if (nArm > 0 && nRef > 0) {
      // Level counts as frequency weights: the same proportions as expanding every participant.
      const la = [...a.entries()].filter(([, k]) => k > 0);
      const lr = [...r.entries()].filter(([, k]) => k > 0);
      smd = safe(() =>
        categoricalSmd(
          la.map(([l]) => l),
          lr.map(([l]) => l),
          { treated: la.map(([, k]) => k), control: lr.map(([, k]) => k) },
        ),
      );
      if (smd === null) notes.push('SMD undefined (one level only, or levels that barely overlap)');
    } else notes.push('no values in one arm');
  } else {
    const a = cells.moments.get(cov.key)?.get(armId);
    const r = cells.moments.get(cov.key)?.get(refId);
    nArm = a?.n ?? 0;
    nRef = r?.n ?? 0;
    if (a && r && nArm > 0 && nRef > 0) {
      if (cov.kind === 'binary') {
        const pa = a.mean;
        const pr = r.mean;
        smd = safe(() =>
          standardizedMeanDifferenceFromSummaries({ mean: pa, variance: pa * (1 - pa) }, { mean: pr, variance: pr * (1 - pr) }),
        );
        if (smd === null) notes.push('SMD undefined (the same value in everyone)');
      } else {
        const va = safe(() => a.variance);
        const vref = safe(() => r.variance);
        if (va === null || vref === null) notes.push('fewer than two values in an arm');
        else {
          smd = safe(() => standardizedMeanDifferenceFromSummaries({ mean: a.mean, variance: va }, { mean: r.mean, variance: vref }));
          if (smd === null) notes.push('SMD undefined (no spread in either arm)');
          // Variance ratio s2_arm / s2_reference (Rubin 2001), from the same accumulator variances.
          if (va > 0 && vref > 0) vr = va / vref;
          else notes.push('variance ratio undefined (no spread in an arm)');
        }
      }
    } else notes.push('no values in one arm');
  }
  const band = nArm > 0 && nRef > 0 ? smdChanceBand(nArm, nRef, CHANCE_LEVEL) : null;
  const chanceBand = band
    ? { level: band.level, se: band.se, halfWidth: band.halfWidth, lower: band.lower, upper: band.upper }
    : null;
  return {
    armId,
    referenceArmId: refId,
    nArm,
    nReference: nRef,
    smd,
    varianceRatio: vr,
    chanceBand,
    flags: flagsFor(rules, smd, vr, chanceBand?.halfWidth ?? null),
    note: notes.length ? notes.join('; ') : null,
  };
}

export function covariateBalance(
  config: StudyConfig,
  rules: BalanceRules,
  cov: CovariateInfo,
  cells: ScopeCells,
  quantiles: QuantileSet | null,
): CovariateBalance {
  const levelMaps = config.arms.map((a) => cells.levels.get(cov.key)?.get(a.id) ?? new Map<string, number>());
  const allLevels = cov.kind === 'categorical' ? orderedLevels(cov, levelMaps) : [];
  const byArm = config.arms.map((arm) => ({
    armId: arm.id,
    summary: summaryOf(
      cov,
      cells.participants.get(arm.id) ?? 0,
      cells.moments.get(cov.key)?.get(arm.id),
      cells.levels.get(cov.key)?.get(arm.id),
      allLevels,
      quantiles?.[cov.key]?.byArm[arm.id],
    ),
  }));
  // Pooled: every arm merged (what a blinded reader may see).
  const pooledAcc = new MomentAccumulator();
  const pooledLevels = new Map<string, number>();
  let pooledParticipants = 0;
  for (const arm of config.arms) {
    pooledParticipants += cells.participants.get(arm.id) ?? 0;
    const acc = cells.moments.get(cov.key)?.get(arm.id);
    if (acc) pooledAcc.merge(acc);
    for (const [l, k] of cells.levels.get(cov.key)?.get(arm.id) ?? []) pooledLevels.set(l, (pooledLevels.get(l) ?? 0) + k);
  }
  const pooled = summaryOf(cov, pooledParticipants, pooledAcc, pooledLevels, allLevels, quantiles?.[cov.key]?.pooled);
  const ref = config.arms[0]!;
  const comparisons = config.arms.slice(1).map((arm) => compare(cov, rules, arm.id, ref.id, cells));
  return { byArm, pooled, comparisons };
}

/** Expected threshold crossings by chance across all covariates, for one comparison's group sizes. */
export function chanceCrossings(
  covariateCount: number,
  nArm: number,
  nReference: number,
  threshold: number,
): { expected: number; probabilityAtLeastOne: number } | null {
  if (covariateCount < 1 || nArm < 1 || nReference < 1) return null;
  const e = expectedChanceExceedances(covariateCount, nArm, nReference, threshold);
  return { expected: e.expected, probabilityAtLeastOne: e.probabilityAtLeastOne };
}
