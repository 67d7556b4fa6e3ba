import { checkNumber } from '../inputChecks/inputChecks.js';
import { normalQuantile } from '../distributions/distributions.js';

export type SmdChanceBand = {
  /** Approximate standard error of an SMD under randomization: sqrt(1/nT + 1/nC). */
  se: number;
  /** z_{(1+level)/2}, the normal quantile used. */
  z: number;
  /** z * se: SMDs inside [-halfWidth, halfWidth] are what chance alone produces `level` of the time. */
  halfWidth: number;
  lower: number;
  upper: number;
  level: number;
  nTreated: number;
  nControl: number;
  approximation: string;
};

export const SMD_CHANCE_APPROXIMATION =
  'large-sample normal approximation: under randomization d ~ N(0, 1/nT + 1/nC) for one covariate';

const FN = 'smdChanceBand';

/** SE(d) ~ sqrt(1/nT + 1/nC) under randomization (shared with expectedChanceExceedances). */
export function chanceStandardError(fn: string, nTreated: unknown, nControl: unknown): number {
  const nT = checkNumber(fn, 'nTreated', nTreated, { min: 1, integer: true });
  const nC = checkNumber(fn, 'nControl', nControl, { min: 1, integer: true });
  return Math.sqrt(1 / nT + 1 / nC);
}

/**
 * The range of SMDs that simple randomization produces by chance for one covariate.
 *
 * Under randomization the arms are samples from one population, and for large arms the SMD is
 * approximately normal with mean 0 and SE(d) = sqrt(1/nT + 1/nC) (the leading term of the
 * variance of a standardized difference; Hedges & Olkin 1985, memory; DOMAIN.md). The band is
 *   [-z se, z se],  z = Phi^{-1}((1 + level) / 2).
 * The approximation ignores the O(d^2 / n) term and the sampling error of the SD, so it is
 * slightly narrow for very small arms; it is for reading an alert, not for a test.
 *
 * An SMD outside the band is unusual under chance but, in a randomized trial, still chance
 * (CONSORT 2010 item 15): it does not justify adding a covariate to the pre-specified model.
 *
 * @throws {TypeError} an argument is not a number.
 * @throws {RangeError} nTreated or nControl is not a positive integer; level is not in (0, 1).
 * @example
 * smdChanceBand(50, 50); // { se: 0.2, z: 1.95996..., lower: -0.39199..., upper: 0.39199..., level: 0.95, ... }
 */
export function smdChanceBand(nTreated: number, nControl: number, level = 0.95): SmdChanceBand {
  const se = chanceStandardError(FN, nTreated, nControl);
  checkNumber(FN, 'level', level, { min: 0, max: 1, exclusiveMin: true, exclusiveMax: true });
  const z = normalQuantile((1 + level) / 2);
  const halfWidth = z * se;
  return {
    se,
    z,
    halfWidth,
    lower: -halfWidth,
    upper: halfWidth,
    level,
    nTreated,
    nControl,
    approximation: SMD_CHANCE_APPROXIMATION,
  };
}
