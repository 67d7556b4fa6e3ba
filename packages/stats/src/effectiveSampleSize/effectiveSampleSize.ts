import { checkedWeights } from '../inputChecks/inputChecks.js';

/**
 * Kish's effective sample size of a set of weights (Kish, Survey Sampling, 1965; memory):
 *   ESS = (sum w)^2 / sum w^2
 * It equals n for equal weights and falls as the weights become more uneven; after
 * propensity-score weighting a low ESS relative to n means a few participants carry the estimate
 * (DOMAIN.md caution 12). Invariant to rescaling the weights.
 *
 * @throws {TypeError} weights is not an array of numbers.
 * @throws {RangeError} weights is empty, has a non-finite or negative entry, or is all zero.
 * @example
 * effectiveSampleSize([1, 1, 1, 1]); // 4
 * effectiveSampleSize([1, 1, 1, 5]); // 64 / 28 = 2.2857...
 */
export function effectiveSampleSize(weights: ArrayLike<number>): number {
  const fn = 'effectiveSampleSize';
  if (weights !== null && typeof weights === 'object' && weights.length === 0) {
    throw new RangeError(`${fn}: weights must not be empty, got 0`);
  }
  const { sum, sumSquares } = checkedWeights(fn, 'weights', weights, (weights as ArrayLike<number>)?.length ?? 0, 'weights');
  return (sum * sum) / sumSquares;
}
