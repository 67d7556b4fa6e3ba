import { checkBinary, checkOption, checkNumber } from '../inputChecks/inputChecks.js';
import { armMoments, armVariance } from '../weightedMoments/weightedMoments.js';

export type SmdKind = 'continuous' | 'binary';

export type SmdOptions = {
  kind: SmdKind;
  /** Weights for the treated arm (e.g. propensity-score weights), same length as `treated`. */
  weightsTreated?: ArrayLike<number>;
  /** Weights for the control arm, same length as `control`. */
  weightsControl?: ArrayLike<number>;
};

const FN = 'standardizedMeanDifference';
const KINDS: readonly SmdKind[] = ['continuous', 'binary'];

/**
 * Standardized mean difference (SMD) of one baseline covariate between two arms.
 *
 * Continuous (Austin, Stat Med 2009;28:3083):
 *   d = (mean_T - mean_C) / sqrt((s2_T + s2_C) / 2)
 * Binary, values coded 0/1 (Austin 2009):
 *   d = (p_T - p_C) / sqrt((p_T (1 - p_T) + p_C (1 - p_C)) / 2)
 *
 * Denominator: the square root of the plain average of the two arm variances (each arm counts
 * once whatever its size), not the n-weighted pooled SD of a t test. The variances are the
 * sample variances with n - 1 (continuous) or the Bernoulli variances p(1 - p) (binary).
 *
 * Weighted (Austin & Stuart, Stat Med 2015;34:3661): means are sum(w x) / sum(w); continuous
 * variances are [sum w / ((sum w)^2 - sum w^2)] * sum w (x - mean_w)^2; binary variances are
 * p_w (1 - p_w) with the weighted proportion. Weights may be given for one arm only (e.g. ATT
 * weighting leaves the treated arm at weight 1). Rescaling an arm's weights changes nothing.
 *
 * The sign is treated minus control; balance tables usually show |d|. |d| < 0.1 is read as
 * negligible imbalance by convention (Normand et al. 2001; Austin 2009). In a randomized trial
 * compare |d| with `smdChanceBand`.
 *
 * Missing values are not accepted here: drop them first (and report them via `summarize`).
 *
 * @throws {TypeError} an input is not an array of numbers (null or a boolean is not a number; booleans
 *   are accepted for kind 'binary'), or options are missing.
 * @throws {RangeError} an arm is empty (binary) or has fewer than two values (continuous); a value
 *   or weight is not finite; weights are negative, all zero, or of the wrong length; a binary value
 *   is not 0/1; `kind` or another option key is unknown; the pooled variance is zero (the SMD is undefined).
 * @example
 * standardizedMeanDifference([12, 10, 11, 13], [9, 10, 8, 9], { kind: 'continuous' }); // 2.3146 (2.5 / sqrt(7/6))
 * standardizedMeanDifference([1, 1, 0, 1], [0, 1, 0, 0], { kind: 'binary' }); // 1.1547 (0.5 / sqrt(0.1875))
 */
export function standardizedMeanDifference(
  treated: ArrayLike<number>,
  control: ArrayLike<number>,
  options: SmdOptions,
): number {
  if (options === null || typeof options !== 'object') {
    throw new TypeError(`${FN}: options must be an object like { kind: 'continuous' }, got ${String(options)}`);
  }
  for (const key of Object.keys(options)) {
    // A misspelt key (e.g. `weights`) would otherwise give the unweighted SMD without a word.
    if (key !== 'kind' && key !== 'weightsTreated' && key !== 'weightsControl') {
      throw new RangeError(`${FN}: unknown option '${key}' (use kind, weightsTreated, weightsControl)`);
    }
  }
  const kind = checkOption(FN, 'options.kind', options.kind, KINDS);
  const minLength = kind === 'continuous' ? 2 : 1;
  const binary = kind === 'binary';
  // One shift for both arms, so the difference of means keeps its digits for a large common
  // offset; symmetric in the arms so that swapping them flips the sign exactly. (A non-number
  // here is reported by the validation inside armMoments.)
  const shift = binary ? 0 : (treated?.[0] as number) / 2 + (control?.[0] as number) / 2;
  const t = armMoments(FN, 'treated', treated, options.weightsTreated, 'options.weightsTreated', minLength, binary, shift);
  const c = armMoments(FN, 'control', control, options.weightsControl, 'options.weightsControl', minLength, binary, shift);
  let vT: number;
  let vC: number;
  if (kind === 'binary') {
    checkBinary(FN, 'treated', treated);
    checkBinary(FN, 'control', control);
    vT = t.mean * (1 - t.mean);
    vC = c.mean * (1 - c.mean);
  } else {
    vT = armVariance(FN, 'treated', t);
    vC = armVariance(FN, 'control', c);
  }
  return smdFromMoments(FN, t.shiftedMean, vT, c.shiftedMean, vC);
}

function smdFromMoments(fn: string, meanT: number, varT: number, meanC: number, varC: number): number {
  const pooled = (varT + varC) / 2;
  if (!(pooled > 0)) {
    throw new RangeError(
      `${fn}: both arms have zero variance (every value identical within each arm), so the SMD is undefined; report the values instead`,
    );
  }
  const d = (meanT - meanC) / Math.sqrt(pooled);
  return d === 0 ? 0 : d; // no -0 in stored results

}

export type ArmSummary = { mean: number; variance: number };

/**
 * The same continuous SMD from per-arm means and variances, e.g. read from two
 * `createAccumulator()` instances: d = (mean_T - mean_C) / sqrt((var_T + var_C) / 2).
 * For a binary covariate pass variance = p (1 - p).
 *
 * @throws {RangeError} a non-finite mean or variance, a negative variance, or both variances zero.
 * @example
 * standardizedMeanDifferenceFromSummaries({ mean: 10, variance: 4 }, { mean: 8, variance: 4 }); // 1
 */
export function standardizedMeanDifferenceFromSummaries(treated: ArmSummary, control: ArmSummary): number {
  const f = 'standardizedMeanDifferenceFromSummaries';
  const mT = checkNumber(f, 'treated.mean', treated?.mean);
  const vT = checkNumber(f, 'treated.variance', treated?.variance, { min: 0 });
  const mC = checkNumber(f, 'control.mean', control?.mean);
  const vC = checkNumber(f, 'control.variance', control?.variance, { min: 0 });
  return smdFromMoments(f, mT, vT, mC, vC);
}
