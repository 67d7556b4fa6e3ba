import { assertArrayLike, checkedWeights } from '../inputChecks/inputChecks.js';
import { armVariance } from '../weightedMoments/weightedMoments.js';

export type SummaryMethods = {
  variance: 'sample (n - 1)' | 'weighted, Austin & Stuart 2015';
  quantiles: 'linear interpolation (Hyndman & Fan type 7)' | 'weighted inverted CDF (Hyndman & Fan type 1)';
  skewness: 'adjusted Fisher-Pearson G1' | 'weighted moment ratio g1';
  excessKurtosis: 'adjusted G2' | 'weighted moment ratio g2';
};

export type Summary = {
  /** Number of non-missing values. */
  n: number;
  /** Number of `null` entries. */
  missing: number;
  /** sum of weights over non-missing values (equals n when unweighted). */
  sumWeights: number;
  mean: number;
  /** null when fewer than two values (or two positive weights): a variance cannot be estimated. */
  variance: number | null;
  sd: number | null;
  median: number;
  q1: number;
  q3: number;
  min: number;
  max: number;
  /** null when n < 3 or the variance is zero. */
  skewness: number | null;
  /** Excess kurtosis (normal = 0); null when n < 4 or the variance is zero. */
  excessKurtosis: number | null;
  weighted: boolean;
  methods: SummaryMethods;
};

const FN = 'summarize';

/**
 * Descriptive summary of one covariate for a baseline table (mean/SD, median/IQR, n, missing).
 *
 * Missing values are `null` and are counted in `missing`; NaN and +/-Infinity are errors (they
 * are not a missing-value code). Statistics that need more data than there is come back as
 * `null` with the reason stated on the type, never as NaN.
 *
 * Unweighted formulas (these match scipy.stats / numpy defaults; checked against scipy 1.17.1):
 * - variance: sum (x - mean)^2 / (n - 1); sd its square root.
 * - quantiles: linear interpolation between order statistics at h = (n - 1) p
 *   (Hyndman & Fan, Am Stat 1996;50:361, type 7; numpy's default `linear`).
 * - skewness: adjusted Fisher-Pearson G1 = g1 sqrt(n (n - 1)) / (n - 2), with
 *   g1 = m3 / m2^{3/2}, m_r = sum (x - mean)^r / n (scipy.stats.skew(bias=False)).
 * - excess kurtosis: G2 = (n - 1) / ((n - 2)(n - 3)) * ((n + 1) g2 + 6), g2 = m4 / m2^2 - 3
 *   (scipy.stats.kurtosis(bias=False)).
 * (Joanes & Gill, The Statistician 1998;47:183 compare these forms.)
 *
 * Weighted formulas (for propensity-weighted samples):
 * - mean sum(w x) / sum(w); variance per Austin & Stuart (Stat Med 2015;34:3661).
 * - quantiles: the weighted inverted CDF, the smallest x whose cumulative weight share reaches p
 *   (numpy.quantile(weights=..., method='inverted_cdf')). With equal weights this is type 1,
 *   so it differs from the unweighted type 7: the method in use is named in `methods`.
 * - skewness and kurtosis: moment ratios with weighted central moments
 *   m_r = sum w (x - mean_w)^r / sum w, without small-sample adjustment (none is standard for
 *   general weights). With integer weights they equal g1/g2 of the replicated data.
 * - min and max are over all non-missing values, including zero-weight ones.
 *
 * @throws {TypeError} values is not an array; an entry is neither a number nor null.
 * @throws {RangeError} no non-missing values; a value is NaN or infinite; weights have the wrong
 *   length, are negative, non-finite, or zero on every non-missing value.
 * @example
 * summarize([1, 2, null, 4, 10]);
 * // { n: 4, missing: 1, mean: 4.25, median: 3, q1: 1.75, q3: 5.5, ... }
 */
export function summarize(values: ArrayLike<number | null>, weights?: ArrayLike<number>): Summary {
  assertArrayLike(FN, 'values', values);
  const total = values.length;
  if (weights !== undefined) {
    assertArrayLike(FN, 'weights', weights);
    if (weights.length !== total) {
      throw new RangeError(`${FN}: weights has length ${weights.length} but values has length ${total}; they must match`);
    }
  }
  const xs: number[] = [];
  const ws: number[] = [];
  let missing = 0;
  for (let i = 0; i < total; i++) {
    const v: unknown = values[i];
    if (v === null) {
      missing++;
      continue;
    }
    if (typeof v !== 'number') {
      throw new TypeError(`${FN}: values[${i}] must be a number or null (missing), got ${typeof v}`);
    }
    if (!Number.isFinite(v)) {
      throw new RangeError(`${FN}: values[${i}] must be finite (use null for missing), got ${v}`);
    }
    xs.push(v);
    if (weights !== undefined) ws.push(weights[i] as number);
  }
  const n = xs.length;
  if (n === 0) {
    throw new RangeError(`${FN}: values has no non-missing entries (length ${total}, ${missing} missing)`);
  }
  return weights === undefined ? unweighted(xs, missing) : weightedSummary(xs, ws, missing);
}

function unweighted(xs: number[], missing: number): Summary {
  const n = xs.length;
  // Moments about a shift (the first value; x - shift is exact for values near it): a large
  // common offset such as 1e9 + N(0, 1) otherwise costs digits of the skewness to the rounding
  // of the mean itself.
  const shift = xs[0] as number;
  let s = 0;
  for (const x of xs) s += x - shift;
  const mean0 = s / n;
  let c = 0;
  for (const x of xs) c += x - shift - mean0;
  const rel = mean0 + c / n;
  const mean = shift + rel;
  let m2 = 0;
  let m3 = 0;
  let m4 = 0;
  for (const x of xs) {
    const d = x - shift - rel;
    const d2 = d * d;
    m2 += d2;
    m3 += d2 * d;
    m4 += d2 * d2;
  }
  const sorted = Float64Array.from(xs).sort();
  const zeroSpread = isZeroSpread(m2, n, sorted);
  if (zeroSpread) m2 = 0;
  const variance = n >= 2 ? m2 / (n - 1) : null;
  let skewness: number | null = null;
  let excessKurtosis: number | null = null;
  if (!zeroSpread) {
    const p2 = m2 / n;
    const g1 = m3 / n / p2 ** 1.5;
    const g2 = m4 / n / (p2 * p2) - 3;
    if (n >= 3) skewness = (g1 * Math.sqrt(n * (n - 1))) / (n - 2);
    if (n >= 4) excessKurtosis = ((n - 1) / ((n - 2) * (n - 3))) * ((n + 1) * g2 + 6);
  }
  return {
    n,
    missing,
    sumWeights: n,
    mean,
    variance,
    sd: variance === null ? null : Math.sqrt(variance),
    median: type7(sorted, 0.5),
    q1: type7(sorted, 0.25),
    q3: type7(sorted, 0.75),
    min: sorted[0] as number,
    max: sorted[n - 1] as number,
    skewness,
    excessKurtosis,
    weighted: false,
    methods: {
      variance: 'sample (n - 1)',
      quantiles: 'linear interpolation (Hyndman & Fan type 7)',
      skewness: 'adjusted Fisher-Pearson G1',
      excessKurtosis: 'adjusted G2',
    },
  };
}

function weightedSummary(xs: number[], ws: number[], missing: number): Summary {
  const n = xs.length;
  const { sum: sw, sumSquares: sw2 } = checkedWeights(FN, 'weights (at non-missing values)', ws, n, 'values');
  const shift = xs[0] as number; // as in the unweighted case
  let swx = 0;
  for (let i = 0; i < n; i++) swx += (ws[i] as number) * ((xs[i] as number) - shift);
  const mean0 = swx / sw;
  let c = 0;
  for (let i = 0; i < n; i++) c += (ws[i] as number) * ((xs[i] as number) - shift - mean0);
  const rel = mean0 + c / sw;
  const mean = shift + rel;
  let m2 = 0;
  let m3 = 0;
  let m4 = 0;
  for (let i = 0; i < n; i++) {
    const w = ws[i] as number;
    const d = (xs[i] as number) - shift - rel;
    const d2 = d * d;
    m2 += w * d2;
    m3 += w * d2 * d;
    m4 += w * d2 * d2;
  }
  const order = xs.map((_, i) => i).sort((a, b) => (xs[a] as number) - (xs[b] as number));
  const sortedX = order.map((i) => xs[i] as number);
  const sortedW = order.map((i) => ws[i] as number);
  const zeroSpread = isZeroSpread(m2, sw, Float64Array.from(sortedX));
  if (zeroSpread) m2 = 0;
  let variance: number | null = null;
  try {
    variance = armVariance(FN, 'values', { n, sumWeights: sw, sumSquaredWeights: sw2, mean, shift, shiftedMean: rel, sumSquaredDeviations: m2 });
  } catch {
    variance = null; // fewer than two positive weights: documented as null
  }
  let skewness: number | null = null;
  let excessKurtosis: number | null = null;
  if (!zeroSpread) {
    const p2 = m2 / sw;
    skewness = m3 / sw / p2 ** 1.5;
    excessKurtosis = m4 / sw / (p2 * p2) - 3;
  }
  return {
    n,
    missing,
    sumWeights: sw,
    mean,
    variance,
    sd: variance === null ? null : Math.sqrt(variance),
    median: invertedCdf(sortedX, sortedW, sw, 0.5),
    q1: invertedCdf(sortedX, sortedW, sw, 0.25),
    q3: invertedCdf(sortedX, sortedW, sw, 0.75),
    min: sortedX[0] as number,
    max: sortedX[n - 1] as number,
    skewness,
    excessKurtosis,
    weighted: true,
    methods: {
      variance: 'weighted, Austin & Stuart 2015',
      quantiles: 'weighted inverted CDF (Hyndman & Fan type 1)',
      skewness: 'weighted moment ratio g1',
      excessKurtosis: 'weighted moment ratio g2',
    },
  };
}

/** All values equal (exactly, or within rounding of the mean): no spread to standardise by. */
function isZeroSpread(m2: number, sumWeights: number, sorted: Float64Array): boolean {
  if (sorted[0] === sorted[sorted.length - 1]) return true;
  const scale = Math.max(Math.abs(sorted[0] as number), Math.abs(sorted[sorted.length - 1] as number));
  const ulps = 8 * Number.EPSILON * scale;
  return !(m2 > sumWeights * ulps * ulps);
}

function type7(sorted: Float64Array, p: number): number {
  const h = (sorted.length - 1) * p;
  const lo = Math.floor(h);
  const a = sorted[lo] as number;
  const b = sorted[Math.min(lo + 1, sorted.length - 1)] as number;
  return a + (h - lo) * (b - a);
}

function invertedCdf(sortedX: number[], sortedW: number[], total: number, p: number): number {
  // Same comparison as numpy (cumulative weight / total >= p) so ties at exact shares agree.
  let cum = 0;
  for (let i = 0; i < sortedX.length; i++) {
    cum += sortedW[i] as number;
    if (cum / total >= p) return sortedX[i] as number;
  }
  return sortedX[sortedX.length - 1] as number;
}
