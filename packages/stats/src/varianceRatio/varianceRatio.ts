import { armMoments, armVariance } from '../weightedMoments/weightedMoments.js';

export type ArmWeights = {
  /** Weights for the treated arm, same length as the treated values. */
  treated?: ArrayLike<number>;
  /** Weights for the control arm, same length as the control values. */
  control?: ArrayLike<number>;
};

const FN = 'varianceRatio';

/**
 * Reads the optional per-arm weights argument shared by `varianceRatio` and `categoricalSmd`:
 * `{ treated?, control? }`, or a pair `[treatedWeights, controlWeights]`. Anything else (another
 * array, unknown keys) throws instead of being ignored, which would silently give the
 * unweighted result.
 */
export function readArmWeights(fn: string, weights: unknown): ArmWeights | undefined {
  if (weights === undefined) return undefined;
  if (weights === null || typeof weights !== 'object') {
    throw new TypeError(`${fn}: weights must be an object like { treated, control }, got ${String(weights)}`);
  }
  if (Array.isArray(weights)) {
    const pairOfArrays = weights.length === 2 && weights.every((w) => w === undefined || (w !== null && typeof w === 'object'));
    if (!pairOfArrays) {
      throw new TypeError(`${fn}: weights must be { treated, control } or a pair [treatedWeights, controlWeights]`);
    }
    return { treated: weights[0] as ArrayLike<number> | undefined, control: weights[1] as ArrayLike<number> | undefined };
  }
  for (const key of Object.keys(weights)) {
    if (key !== 'treated' && key !== 'control') throw new RangeError(`${fn}: unknown weights key '${key}' (use treated, control)`);
  }
  return weights as ArmWeights;
}

/**
 * Variance ratio of a continuous covariate: VR = s2_T / s2_C.
 *
 * s2 is the sample variance with n - 1, or with weights the Austin & Stuart (Stat Med
 * 2015;34:3661) weighted variance [sum w / ((sum w)^2 - sum w^2)] * sum w (x - mean_w)^2.
 *
 * Reading: 1 means equal spread. Between 0.5 and 2 is acceptable (Rubin, HSORM 2001;2:169);
 * between 4/5 and 5/4 is good, outside 1/2-2 bad (Rubin, Stat Med 2007;26:20, Table III).
 * These bands are conventions for observational designs; in a randomized trial any departure
 * is chance.
 *
 * @throws {TypeError} an input is not an array of numbers.
 * @throws {RangeError} an arm has fewer than two values (or fewer than two positive weights); a
 *   value or weight is not finite; weights are negative, all zero or of the wrong length; either
 *   arm has zero variance (the ratio is then 0 or undefined and says nothing useful).
 * @example
 * varianceRatio([1, 2, 3, 4], [2, 3]); // (5/3) / 0.5 = 3.333...
 */
export function varianceRatio(
  treated: ArrayLike<number>,
  control: ArrayLike<number>,
  weights?: ArmWeights | [ArrayLike<number> | undefined, ArrayLike<number> | undefined],
): number {
  const w = readArmWeights(FN, weights);
  const t = armMoments(FN, 'treated', treated, w?.treated, 'weights.treated', 2);
  const c = armMoments(FN, 'control', control, w?.control, 'weights.control', 2);
  const vT = armVariance(FN, 'treated', t);
  const vC = armVariance(FN, 'control', c);
  if (vT === 0 || vC === 0) {
    const which = vC === 0 ? 'control' : 'treated';
    throw new RangeError(`${FN}: ${which} has zero variance (all values identical), so the variance ratio is not informative`);
  }
  return vT / vC;
}
