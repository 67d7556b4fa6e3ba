import { checkNumber } from '../inputChecks/inputChecks.js';
import { normalCdf } from '../distributions/distributions.js';
import { chanceStandardError, SMD_CHANCE_APPROXIMATION } from '../smdChanceBand/smdChanceBand.js';

export type ChanceExceedances = {
  covariateCount: number;
  threshold: number;
  /** sqrt(1/nT + 1/nC). */
  se: number;
  /** P(|d| > threshold) for one covariate = 2 (1 - Phi(threshold / se)). */
  probabilityPerCovariate: number;
  /** covariateCount * probabilityPerCovariate: crossings chance alone gives on average. */
  expected: number;
  /** 1 - (1 - p)^k: chance that at least one covariate crosses (independent covariates). */
  probabilityAtLeastOne: number;
  approximation: string;
  assumption: string;
};

const FN = 'expectedChanceExceedances';

/**
 * How many of k baseline covariates would cross an SMD threshold by chance alone under
 * randomization.
 *
 *   se = sqrt(1/nT + 1/nC)                       (large-sample normal approximation)
 *   p  = P(|d| > t) = 2 (1 - Phi(t / se))         (computed as 2 Phi(-t / se) for accuracy)
 *   expected = k p;  P(at least one) = 1 - (1 - p)^k  (computed as -expm1(k log1p(-p)))
 * The expected count holds for any correlation between covariates (linearity of expectation);
 * P(at least one) assumes the covariates are independent, which real covariates rarely are.
 *
 * Reference values (DOMAIN.md): with 50 per arm P(|d| > 0.1) ~ 0.62; with 800 per arm ~ 0.05.
 *
 * @throws {TypeError} an argument is not a number.
 * @throws {RangeError} covariateCount not a non-negative integer; nTreated/nControl not positive
 *   integers; threshold not finite and positive.
 * @example
 * expectedChanceExceedances(20, 50, 50, 0.1); // { probabilityPerCovariate: 0.617..., expected: 12.3..., ... }
 */
export function expectedChanceExceedances(
  covariateCount: number,
  nTreated: number,
  nControl: number,
  threshold: number,
): ChanceExceedances {
  const k = checkNumber(FN, 'covariateCount', covariateCount, { min: 0, integer: true });
  const se = chanceStandardError(FN, nTreated, nControl);
  const t = checkNumber(FN, 'threshold', threshold, { min: 0, exclusiveMin: true });
  const p = 2 * normalCdf(-t / se);
  return {
    covariateCount: k,
    threshold: t,
    se,
    probabilityPerCovariate: p,
    expected: k * p,
    // 1 - (1 - p)^k without cancellation when p is tiny.
    probabilityAtLeastOne: k === 0 ? 0 : -Math.expm1(k * Math.log1p(-p)),
    approximation: SMD_CHANCE_APPROXIMATION,
    assumption:
      'expected count: none beyond the approximation; probability of at least one: covariates independent',
  };
}
