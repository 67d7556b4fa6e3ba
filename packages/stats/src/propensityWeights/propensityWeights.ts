import { assertArrayLike, checkBinary, checkOption } from '../inputChecks/inputChecks.js';

export type Estimand = 'ATE' | 'ATT' | 'overlap';

export type PropensityWeightOptions = {
  estimand: Estimand;
  /** Multiply by the marginal arm probabilities (ATE, ATT only); default false. */
  stabilized?: boolean;
};

export type PropensityWeights = {
  /** One weight per participant, in input order. */
  weights: number[];
  estimand: Estimand;
  stabilized: boolean;
  /** Share treated, n_T / n (used by stabilization). */
  proportionTreated: number;
  /** Kish effective sample size within each arm. */
  effectiveSampleSize: { treated: number; control: number };
  maxWeight: number;
};

const FN = 'propensityWeights';
const ESTIMANDS: readonly Estimand[] = ['ATE', 'ATT', 'overlap'];

/**
 * Propensity-score weights, with e the estimated P(treated | covariates) and T the arm (1/0).
 *
 * - ATE (inverse probability of treatment weighting; Rosenbaum 1987, Robins et al. 2000):
 *     w = T / e + (1 - T) / (1 - e)
 *   stabilized (Robins, Hernan & Brumback, Epidemiology 2000;11:550; Xu et al., Value Health
 *   2010;13:273): w = T p / e + (1 - T)(1 - p) / (1 - e), p = share treated.
 * - ATT: treated 1, controls e / (1 - e) (Hirano, Imbens & Ridder 2003; Austin & Stuart 2015).
 *   stabilized (a convention, stated here): controls multiplied by (1 - p) / p so their weights
 *   sum to about n_C instead of n_T.
 * - overlap (Li, Morgan & Zaslavsky, JASA 2018;113:390): treated 1 - e, controls e. Bounded in
 *   [0, 1]; stabilization is not defined for them. With e from a logistic model, overlap weights
 *   balance the means of the model's covariates exactly; check other covariates too.
 *
 * Stabilization multiplies all of an arm's weights by one constant, so weighted means, the
 * Austin & Stuart variance and hence weighted SMDs are unchanged; it matters for variance
 * estimation of the outcome model and for reading the weights.
 *
 * Extreme weights and a low effective sample size mean a few participants dominate (DOMAIN.md
 * caution 12); `maxWeight` and `effectiveSampleSize` are returned for that warning.
 *
 * @throws {TypeError} scores or treated is not an array; options missing.
 * @throws {RangeError} empty or mismatched inputs; a score not strictly between 0 and 1; treated
 *   not 0/1 (or boolean); one arm empty; unknown estimand or option key; stabilized with overlap.
 * @example
 * propensityWeights([0.2, 0.5, 0.8], [1, 0, 1], { estimand: 'ATE' }).weights; // [5, 2, 1.25]
 */
export function propensityWeights(
  scores: ArrayLike<number>,
  treated: ArrayLike<number | boolean>,
  options: PropensityWeightOptions,
): PropensityWeights {
  if (options === null || typeof options !== 'object') {
    throw new TypeError(`${FN}: options must be an object like { estimand: 'ATE' }, got ${String(options)}`);
  }
  for (const key of Object.keys(options)) {
    if (key !== 'estimand' && key !== 'stabilized') throw new RangeError(`${FN}: unknown option '${key}' (use estimand, stabilized)`);
  }
  const estimand = checkOption(FN, 'options.estimand', options.estimand, ESTIMANDS);
  const stabilized = options.stabilized ?? false;
  if (typeof stabilized !== 'boolean') throw new TypeError(`${FN}: options.stabilized must be a boolean`);
  if (stabilized && estimand === 'overlap') {
    throw new RangeError(`${FN}: options.stabilized is not defined for estimand 'overlap' (overlap weights are already bounded by 1)`);
  }
  assertArrayLike(FN, 'scores', scores);
  assertArrayLike(FN, 'treated', treated);
  const n = scores.length;
  if (n === 0) throw new RangeError(`${FN}: scores must not be empty, got 0`);
  if (treated.length !== n) throw new RangeError(`${FN}: treated has length ${treated.length} but scores has length ${n}; they must match`);
  checkBinary(FN, 'treated', treated);
  let nT = 0;
  for (let i = 0; i < n; i++) {
    const e = scores[i];
    if (typeof e !== 'number' || !(e > 0 && e < 1)) {
      throw new RangeError(`${FN}: scores[${i}] must be a number strictly between 0 and 1, got ${String(e)}`);
    }
    if (treated[i] === 1 || treated[i] === true) nT++;
  }
  if (nT === 0 || nT === n) throw new RangeError(`${FN}: treated has ${nT === 0 ? 'no treated' : 'no control'} participants; both arms are needed`);
  const p = nT / n;
  const weights = new Array<number>(n);
  let max = 0;
  let swT = 0;
  let sw2T = 0;
  let swC = 0;
  let sw2C = 0;
  for (let i = 0; i < n; i++) {
    const e = scores[i] as number;
    const t = treated[i] === 1 || treated[i] === true;
    let w: number;
    if (estimand === 'ATE') w = t ? (stabilized ? p : 1) / e : (stabilized ? 1 - p : 1) / (1 - e);
    else if (estimand === 'ATT') w = t ? 1 : (e / (1 - e)) * (stabilized ? (1 - p) / p : 1);
    else w = t ? 1 - e : e;
    weights[i] = w;
    if (w > max) max = w;
    if (t) {
      swT += w;
      sw2T += w * w;
    } else {
      swC += w;
      sw2C += w * w;
    }
  }
  return {
    weights,
    estimand,
    stabilized,
    proportionTreated: p,
    effectiveSampleSize: { treated: (swT * swT) / sw2T, control: (swC * swC) / sw2C },
    maxWeight: max,
  };
}
