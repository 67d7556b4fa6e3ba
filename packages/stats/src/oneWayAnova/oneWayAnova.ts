import { fCdfUpper } from '../distributions/distributions.js';

/**
 * One-way (fixed effects) analysis of variance.
 *
 * With k groups, group sizes n_i, group means ybar_i, grand mean ybar and N = sum n_i:
 *   SS_between = sum_i n_i (ybar_i - ybar)^2           df = k - 1
 *   SS_within  = sum_i sum_j (y_ij - ybar_i)^2         df = N - k
 *   SS_total   = sum_i sum_j (y_ij - ybar)^2           df = N - 1
 *   F = (SS_between / (k-1)) / (SS_within / (N-k)),  p = P(F_{k-1, N-k} > F)
 *   eta^2 = SS_between / SS_total
 * (e.g. NIST/SEMATECH e-Handbook of Statistical Methods §7.4.3.3; Montgomery, Design and
 * Analysis of Experiments, ch. 3.)
 *
 * Numerics: every value is first shifted by one data value s (y - s is exact in floating point
 * when y and s are within a factor of two, Sterbenz's lemma), then means are computed in two
 * passes (mean, then mean of the deviations as a correction) and sums of squares from centred
 * deviations. The textbook one-pass "sum of squares minus n mean^2" formula loses every digit
 * on NIST's SmLs07-09 (13 constant leading digits); this passes them. Note that a value like
 * 1000000000000.4 is itself stored as 1000000000000.400024...: see the README for what that
 * means for the certified digits.
 *
 * @param groups one array of finite numbers per group; at least 2 groups, each of size >= 2.
 * @returns the ANOVA table, eta squared, residual SD (root MS within), R squared, group summaries.
 * @throws {TypeError} when groups is not an array of arrays, or a value is not a number.
 * @throws {RangeError} with fewer than 2 groups, a group with fewer than 2 values, a
 *   non-finite value (named as groups[i][j]), or zero within-group variation (F undefined).
 * @example
 *   oneWayAnova([[6.9, 5.4, 5.8, 4.6, 4.0], [8.3, 6.8, 7.8, 9.2, 6.5], [8.0, 10.5, 8.1, 6.9, 9.3]]);
 *   // between.ss ≈ 27.897, within.ss ≈ 17.452, between.f ≈ 9.59 (NIST e-Handbook §7.4.3.3)
 */

export type OneWayAnovaResult = {
  between: { df: number; ss: number; ms: number; f: number; p: number };
  within: { df: number; ss: number; ms: number };
  total: { df: number; ss: number };
  etaSquared: number;
  /** Same as etaSquared (SS_between / SS_total), under the regression name. */
  rSquared: number;
  /** sqrt(MS_within): the pooled within-group SD. */
  residualSD: number;
  n: number;
  groupCount: number;
  grandMean: number;
  groups: Array<{ index: number; n: number; mean: number; sd: number }>;
};

function checkGroups(fn: string, groups: unknown): asserts groups is ArrayLike<number>[] {
  if (!Array.isArray(groups)) throw new TypeError(`${fn}: groups must be an array of arrays of numbers`);
  if (groups.length < 2) throw new RangeError(`${fn}: groups needs at least 2 groups, got ${groups.length}`);
  groups.forEach((g: unknown, i) => {
    if (g === null || typeof g !== 'object' || typeof (g as { length?: unknown }).length !== 'number') {
      throw new TypeError(`${fn}: groups[${i}] must be an array of numbers`);
    }
    const arr = g as ArrayLike<unknown>;
    if (arr.length < 2) {
      throw new RangeError(`${fn}: groups[${i}] has ${arr.length} value(s); every group needs at least 2`);
    }
    for (let j = 0; j < arr.length; j++) {
      const v = arr[j];
      if (typeof v !== 'number') throw new TypeError(`${fn}: groups[${i}][${j}] must be a number, got ${typeof v}`);
      if (!Number.isFinite(v)) throw new RangeError(`${fn}: groups[${i}][${j}] must be finite, got ${String(v)}`);
    }
  });
}

/** Two-pass mean of (values - shift). */
function shiftedMean(values: ArrayLike<number>, shift: number): number {
  const n = values.length;
  let s = 0;
  for (let i = 0; i < n; i++) s += (values[i] as number) - shift;
  const m = s / n;
  let c = 0;
  for (let i = 0; i < n; i++) c += (values[i] as number) - shift - m;
  return m + c / n;
}

/** See the module doc block. */
export function oneWayAnova(groups: ArrayLike<number>[]): OneWayAnovaResult {
  const fn = 'oneWayAnova';
  checkGroups(fn, groups);
  const k = groups.length;
  const shift = (groups[0] as ArrayLike<number>)[0] as number;

  let n = 0;
  let grandSum = 0;
  const means = groups.map((g) => {
    n += g.length;
    const m = shiftedMean(g, shift);
    return m;
  });
  for (const g of groups) for (let j = 0; j < g.length; j++) grandSum += (g[j] as number) - shift;
  let grand = grandSum / n;
  let corr = 0;
  for (const g of groups) for (let j = 0; j < g.length; j++) corr += (g[j] as number) - shift - grand;
  grand += corr / n;

  let ssBetween = 0;
  let ssWithin = 0;
  let ssTotal = 0;
  const summaries = groups.map((g, i) => {
    const m = means[i] as number;
    let ss = 0;
    for (let j = 0; j < g.length; j++) {
      const d = (g[j] as number) - shift;
      ss += (d - m) * (d - m);
      ssTotal += (d - grand) * (d - grand);
    }
    ssWithin += ss;
    ssBetween += g.length * (m - grand) * (m - grand);
    return { index: i, n: g.length, mean: m + shift, sd: Math.sqrt(ss / (g.length - 1)) };
  });

  if (!(ssWithin > 0)) {
    throw new RangeError(`${fn}: groups have zero within-group variation (every group is constant); F is undefined`);
  }
  const dfB = k - 1;
  const dfW = n - k;
  const msB = ssBetween / dfB;
  const msW = ssWithin / dfW;
  const f = msB / msW;
  return {
    between: { df: dfB, ss: ssBetween, ms: msB, f, p: fCdfUpper(f, dfB, dfW) },
    within: { df: dfW, ss: ssWithin, ms: msW },
    total: { df: n - 1, ss: ssTotal },
    etaSquared: ssBetween / ssTotal,
    rSquared: ssBetween / ssTotal,
    residualSD: Math.sqrt(msW),
    n,
    groupCount: k,
    grandMean: grand + shift,
    groups: summaries,
  };
}
