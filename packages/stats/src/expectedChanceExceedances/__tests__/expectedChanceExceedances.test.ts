import { describe, expect, it } from 'vitest';
import { expectClose, loadBalanceFixture } from '../../balanceTestSupport/balanceTestSupport.js';
import { expectedChanceExceedances } from '../expectedChanceExceedances.js';

type Case = { nTreated: number; nControl: number; threshold: number; probabilityPerCovariate: number };
const fixture = loadBalanceFixture<{ cases: Case[] }>('chance-band.json');

describe('expectedChanceExceedances: cross-check against scipy.stats.norm.sf (fixture chance-band.json)', () => {
  for (const c of fixture.cases) {
    it(`matches scipy for nT=${c.nTreated}, nC=${c.nControl}, t=${c.threshold}`, () => {
      const r = expectedChanceExceedances(12, c.nTreated, c.nControl, c.threshold);
      const ctx = { case: `${c.nTreated}/${c.nControl}/${c.threshold}`, input: c };
      expectClose(r.probabilityPerCovariate, c.probabilityPerCovariate, fixture.tolerance, { ...ctx, quantity: 'p' });
      expectClose(r.expected, 12 * c.probabilityPerCovariate, fixture.tolerance, { ...ctx, quantity: 'expected' });
      expectClose(r.probabilityAtLeastOne, 1 - (1 - c.probabilityPerCovariate) ** 12, fixture.tolerance, {
        ...ctx,
        quantity: 'at least one',
      });
    });
  }
  it('reproduces the DOMAIN.md figures: 50 per arm ~ 0.62, 800 per arm ~ 0.05 for |d| > 0.1', () => {
    expect(expectedChanceExceedances(1, 50, 50, 0.1).probabilityPerCovariate).toBeCloseTo(0.617, 3);
    expect(expectedChanceExceedances(1, 800, 800, 0.1).probabilityPerCovariate).toBeCloseTo(0.0455, 4);
  });
  it('gives zero expected crossings for zero covariates', () => {
    const r = expectedChanceExceedances(0, 30, 30, 0.1);
    expect(r.expected).toBe(0);
    expect(r.probabilityAtLeastOne).toBe(0);
  });
});

describe('expectedChanceExceedances: far tails (large arms, large threshold)', () => {
  // Reference: scipy 1.17.1, p = 2 * scipy.stats.norm.sf(t / sqrt(1/nT + 1/nC)) and
  // -numpy.expm1(k * numpy.log1p(-p)). jstat's erfc alone gave 2.6e-4 relative error at 5e-14
  // and 0 below ~1e-17 (found by the independent scipy cross-check).
  it.each([
    [8, 313, 820, 0.5, 5.252742293344708e-14, 4.202193834674994e-13],
    [3, 712, 1153, 0.5, 9.578937176332497e-26, 2.873681152899749e-25],
    [40, 1656, 158, 0.5, 1.913798331155064e-9, 7.655193038935588e-8],
  ])('k = %i, nT = %i, nC = %i, t = %f', (k, nT, nC, t, p, atLeastOne) => {
    const r = expectedChanceExceedances(k, nT, nC, t);
    expect(Math.abs(r.probabilityPerCovariate - p) / p).toBeLessThan(1e-9);
    expect(Math.abs(r.expected - k * p) / (k * p)).toBeLessThan(1e-9);
    expect(Math.abs(r.probabilityAtLeastOne - atLeastOne) / atLeastOne).toBeLessThan(1e-9);
  });
});

describe('expectedChanceExceedances: bad input', () => {
  it.each([
    ['negative covariateCount', () => expectedChanceExceedances(-1, 10, 10, 0.1), RangeError, /covariateCount must be at least 0/],
    ['fractional covariateCount', () => expectedChanceExceedances(1.5, 10, 10, 0.1), RangeError, /covariateCount must be an integer/],
    ['zero threshold', () => expectedChanceExceedances(3, 10, 10, 0), RangeError, /threshold must be greater than 0/],
    ['infinite threshold', () => expectedChanceExceedances(3, 10, 10, Number.POSITIVE_INFINITY), RangeError, /threshold must be finite/],
    ['zero nControl', () => expectedChanceExceedances(3, 10, 0, 0.1), RangeError, /nControl must be at least 1/],
  ])('rejects %s', (_label, call, type, message) => {
    expect(call).toThrow(type);
    expect(call).toThrow(message);
  });
});
