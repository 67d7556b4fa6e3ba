import { createRequire } from 'node:module';

/**
 * Standard normal CDF and quantile from jstat (a well-kept distribution library; no
 * home-grown approximations). jstat ships no type declarations, so the few functions used
 * here are typed locally instead of declaring the whole module globally.
 */
type JStatNormal = {
  cdf(x: number, mean: number, sd: number): number;
  inv(p: number, mean: number, sd: number): number;
};

const require = createRequire(import.meta.url);
const { jStat } = require('jstat') as { jStat: { normal: JStatNormal } };

/** Phi(x), the standard normal cumulative distribution function. */
export function normalCdf(x: number): number {
  return jStat.normal.cdf(x, 0, 1);
}

/** Phi^{-1}(p) for 0 < p < 1. */
export function normalQuantile(p: number): number {
  return jStat.normal.inv(p, 0, 1);
}
