import { fCdfUpper } from '../distributions/distributions.js';

/**
 * Levene's test for equal variances across groups (Levene 1960), and its median-centred
 * Brown-Forsythe variant (Brown & Forsythe, JASA 1974;69:364), as described in the
 * NIST/SEMATECH e-Handbook §1.3.5.10:
 *   z_ij = |y_ij - c_i|,  c_i = mean (center 'mean') or median (center 'median') of group i
 *   W = [(N - k) / (k - 1)] * sum_i n_i (zbar_i - zbar)^2 / sum_i sum_j (z_ij - zbar_i)^2
 * i.e. the one-way ANOVA F on the absolute deviations, referred to F(k - 1, N - k).
 * The default centre is the median: the e-Handbook recommends it, being robust to
 * non-normality. Values are first shifted by one data value; means and sums of squares are
 * computed two-pass on the deviations.
 *
 * Checked against the e-Handbook gear-diameter example (W = 1.705910, median) and scipy
 * 1.17.1 `stats.levene` on generated data.
 *
 * @param groups one array of finite numbers per group; at least 2 groups of at least 2 values.
 * @param options `{ center: 'mean' | 'median' }` (default 'median').
 * @throws {TypeError} when groups is not an array of number arrays, or options is not an object.
 * @throws {RangeError} with fewer than 2 groups, a group with fewer than 2 values, a non-finite
 *   value, an unknown option or centre, or when the absolute deviations do not vary within any
 *   group (W undefined; e.g. every group has 2 values with the median centre).
 * @example
 *   leveneTest([[1, 2, 4, 7], [2, 3, 3, 4], [0, 5, 9, 12]], { center: 'median' });
 *   // { statistic, df1: 2, df2: 9, p, center: 'median', method: 'Brown-Forsythe (median-centred Levene)' }
 */

export type LeveneCenter = 'mean' | 'median';
export type LeveneResult = { statistic: number; df1: number; df2: number; p: number; center: LeveneCenter; method: string };

const FN = 'leveneTest';

function median(values: ArrayLike<number>): number {
  const s = Array.from(values).sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? (s[m] as number) : ((s[m - 1] as number) + (s[m] as number)) / 2;
}

function twoPassMean(values: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < values.length; i++) s += values[i] as number;
  const m = s / values.length;
  let c = 0;
  for (let i = 0; i < values.length; i++) c += (values[i] as number) - m;
  return m + c / values.length;
}

/** Validates the groups argument shared by leveneTest and sdRatioRule. */
export function checkNumberGroups(fn: string, groups: unknown): asserts groups is ArrayLike<number>[] {
  if (!Array.isArray(groups)) throw new TypeError(`${fn}: groups must be an array of arrays of numbers`);
  if (groups.length < 2) throw new RangeError(`${fn}: groups needs at least 2 groups, got ${groups.length}`);
  groups.forEach((g: unknown, i) => {
    if (g === null || typeof g !== 'object' || typeof (g as { length?: unknown }).length !== 'number') {
      throw new TypeError(`${fn}: groups[${i}] must be an array of numbers`);
    }
    const arr = g as ArrayLike<unknown>;
    if (arr.length < 2) throw new RangeError(`${fn}: groups[${i}] has ${arr.length} value(s); every group needs at least 2`);
    for (let j = 0; j < arr.length; j++) {
      const v = arr[j];
      if (typeof v !== 'number') throw new TypeError(`${fn}: groups[${i}][${j}] must be a number, got ${typeof v}`);
      if (!Number.isFinite(v)) throw new RangeError(`${fn}: groups[${i}][${j}] must be finite, got ${String(v)}`);
    }
  });
}

/** See the module doc block. */
export function leveneTest(groups: ArrayLike<number>[], options: { center?: LeveneCenter } = {}): LeveneResult {
  checkNumberGroups(FN, groups);
  if (options === null || typeof options !== 'object') throw new TypeError(`${FN}: options must be an object`);
  for (const key of Object.keys(options)) if (key !== 'center') throw new RangeError(`${FN}: unknown option '${key}'`);
  const center = options.center ?? 'median';
  if (center !== 'mean' && center !== 'median') {
    throw new RangeError(`${FN}: options.center must be 'mean' or 'median', got ${JSON.stringify(center)}`);
  }
  // Work on y - shift (shift = the first value; exact for values near it) so that a large
  // common offset does not cost digits in the centre (a rounded mean or (a + b) / 2 median).
  const shift = (groups[0] as ArrayLike<number>)[0] as number;
  const z = groups.map((g0) => {
    const g = Float64Array.from({ length: g0.length }, (_, j) => (g0[j] as number) - shift);
    const c = center === 'mean' ? twoPassMean(g) : median(g);
    return Float64Array.from({ length: g.length }, (_, j) => Math.abs((g[j] as number) - c));
  });
  const k = z.length;
  const n = z.reduce((s, g) => s + g.length, 0);
  const means = z.map(twoPassMean);
  let grand = 0;
  z.forEach((g, i) => (grand += g.length * (means[i] as number)));
  grand /= n;
  let between = 0;
  let within = 0;
  z.forEach((g, i) => {
    const m = means[i] as number;
    between += g.length * (m - grand) ** 2;
    for (let j = 0; j < g.length; j++) within += ((g[j] as number) - m) ** 2;
  });
  if (!(within > 0)) {
    throw new RangeError(
      `${FN}: groups: the absolute deviations from each group's ${center} do not vary within any group, so W is undefined` +
        (center === 'median' ? ' (this always happens when every group has 2 values)' : ''),
    );
  }
  const df1 = k - 1;
  const df2 = n - k;
  const statistic = (df2 / df1) * (between / within);
  return {
    statistic,
    df1,
    df2,
    p: fCdfUpper(statistic, df1, df2),
    center,
    method: center === 'median' ? 'Brown-Forsythe (median-centred Levene)' : 'Levene (mean-centred)',
  };
}
