import { checkedSum, checkedWeights } from '../inputChecks/inputChecks.js';

/**
 * Mean and variance of one arm, optionally weighted. The shared core of
 * `standardizedMeanDifference`, `varianceRatio` and `summarize`.
 *
 * Unweighted: mean = sum(x) / n; variance = sum (x - mean)^2 / (n - 1).
 *
 * Weighted (Austin & Stuart, Stat Med 2015;34:3661, section on weighted balance diagnostics):
 *   mean_w = sum(w x) / sum(w)
 *   var_w  = [sum(w) / ((sum w)^2 - sum(w^2))] * sum w (x - mean_w)^2
 * which equals the unweighted (n - 1) variance when all weights are equal, and is unchanged
 * when every weight is multiplied by the same constant.
 *
 * Algorithm: corrected two-pass (Chan, Golub & LeVeque, Am Stat 1983;37:242) on x - K for a shift
 * K (the arm's first value unless the caller passes one, e.g. one shift shared by two arms): the
 * second pass subtracts (sum w (x - K - m))^2 / sum(w), which removes the rounding error of the
 * first-pass mean, and x - K is exact for values near K, so a large common offset costs no digits.
 *
 * @throws {TypeError} values or weights not arrays of numbers.
 * @throws {RangeError} fewer than `minLength` values, a non-finite value, weights of the wrong
 *   length, negative or all-zero weights.
 */
export type ArmMoments = {
  /** Number of values (including zero-weight ones). */
  n: number;
  sumWeights: number;
  sumSquaredWeights: number;
  mean: number;
  /** The shift K the moments were taken about, and mean - K as computed (no rounding at K's scale). */
  shift: number;
  shiftedMean: number;
  /** sum w (x - mean)^2 (the "M2" of Welford); variance is derived from it. */
  sumSquaredDeviations: number;
};

export function armMoments(
  fn: string,
  name: string,
  values: unknown,
  weights: unknown,
  weightsName: string,
  minLength = 1,
  allowBooleans = false,
  shift?: number,
): ArmMoments {
  const sum = checkedSum(fn, name, values, minLength, allowBooleans);
  const xs = values as ArrayLike<number>;
  const n = xs.length;
  // Moments about a shift K (default: this arm's first value), so that a large common offset
  // (1e9 + N(0, 1)) does not cost digits to the rounding of the mean: x - K is exact near K.
  // The first-pass mean m0 is rough; the correction term fixes it (Chan, Golub & LeVeque).
  const k = shift ?? +(xs[0] as number);
  if (weights === undefined) {
    const m0 = sum / n - k;
    let ss = 0;
    let comp = 0;
    for (let i = 0; i < n; i++) {
      const d = (xs[i] as number) - k - m0;
      ss += d * d;
      comp += d;
    }
    ss -= (comp * comp) / n;
    const rel = m0 + comp / n;
    return { n, sumWeights: n, sumSquaredWeights: n, mean: k + rel, shift: k, shiftedMean: rel, sumSquaredDeviations: aboveNoise(ss, n, k + rel) };
  }
  const { sum: sw, sumSquares: sw2 } = checkedWeights(fn, weightsName, weights, n, name);
  const ws = weights as ArrayLike<number>;
  let swx = 0;
  for (let i = 0; i < n; i++) swx += (ws[i] as number) * ((xs[i] as number) - k);
  const m0 = swx / sw;
  let ss = 0;
  let comp = 0;
  for (let i = 0; i < n; i++) {
    const w = ws[i] as number;
    const d = (xs[i] as number) - k - m0;
    ss += w * d * d;
    comp += w * d;
  }
  ss -= (comp * comp) / sw;
  const rel = m0 + comp / sw;
  return { n, sumWeights: sw, sumSquaredWeights: sw2, mean: k + rel, shift: k, shiftedMean: rel, sumSquaredDeviations: aboveNoise(ss, sw, k + rel) };
}

/**
 * Constant data can leave deviations of a few ulps of the mean (the mean itself is rounded).
 * Below that floor the spread is rounding noise, so it is reported as exactly zero; otherwise a
 * constant arm would give an enormous SMD instead of the "zero variance" error.
 */
function aboveNoise(ss: number, sumWeights: number, mean: number): number {
  const ulps = 8 * Number.EPSILON * mean;
  return ss > sumWeights * ulps * ulps ? ss : 0;
}

/**
 * Austin & Stuart (2015) variance from the moments; throws when it is undefined (fewer than two
 * values, or all the weight on one value).
 */
export function armVariance(fn: string, name: string, m: ArmMoments): number {
  const denom = m.sumWeights * m.sumWeights - m.sumSquaredWeights;
  // Relative test: with one positive weight the denominator is zero up to rounding.
  if (!(denom > 1e-12 * m.sumWeights * m.sumWeights)) {
    throw new RangeError(
      `${fn}: ${name} needs at least two values with positive weight to estimate a variance, got n = ${m.n}`,
    );
  }
  return (m.sumWeights / denom) * m.sumSquaredDeviations;
}
