import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { standardizedMeanDifference } from '../../standardizedMeanDifference/standardizedMeanDifference.js';
import { logisticRegression } from '../../logisticRegression/logisticRegression.js';
import { propensityWeights, type Estimand } from '../propensityWeights.js';

const e = [0.2, 0.5, 0.8, 0.4];
const t = [1, 0, 1, 0];

describe('propensityWeights: formulas', () => {
  it('ATE: 1/e for treated, 1/(1-e) for controls', () => {
    expect(propensityWeights(e, t, { estimand: 'ATE' }).weights).toEqual([5, 2, 1.25, 1 / 0.6]);
  });
  it('ATE stabilized multiplies by the marginal arm shares (Robins et al. 2000)', () => {
    const w = propensityWeights(e, t, { estimand: 'ATE', stabilized: true }).weights;
    [0.5 * 5, 0.5 * 2, 0.5 * 1.25, 0.5 / 0.6].forEach((x, i) => expect(w[i]).toBeCloseTo(x, 14));
  });
  it('ATT: 1 for treated, e/(1-e) for controls; stabilized scales controls by (1-p)/p', () => {
    expect(propensityWeights(e, t, { estimand: 'ATT' }).weights).toEqual([1, 1, 1, 0.4 / 0.6]);
    const s = propensityWeights([0.2, 0.5, 0.5, 0.4], [1, 0, 0, 0], { estimand: 'ATT', stabilized: true }).weights;
    expect(s[1]).toBeCloseTo(1 * 3, 14); // p = 1/4, (1-p)/p = 3
  });
  it('overlap: 1 - e for treated, e for controls (Li, Morgan & Zaslavsky 2018)', () => {
    const w = propensityWeights(e, t, { estimand: 'overlap' }).weights;
    [0.8, 0.5, 0.2, 0.4].forEach((x, i) => expect(w[i]).toBeCloseTo(x, 15));
  });
  it('accepts boolean arm indicators and reports ESS and max weight', () => {
    const r = propensityWeights(e, [true, false, true, false], { estimand: 'ATE' });
    expect(r.maxWeight).toBe(5);
    expect(r.effectiveSampleSize.treated).toBeCloseTo(6.25 ** 2 / (25 + 1.5625), 12);
  });
  it('overlap weights from a logistic propensity model balance the model covariates exactly (Li et al. 2018)', () => {
    // Invented demo-scale data; the property itself is the published result.
    const x: number[][] = [];
    const arm: number[] = [];
    let s = 12345;
    const u = () => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 2 ** 32);
    for (let i = 0; i < 400; i++) {
      const a = u() * 4 - 2;
      const b = u() < 0.4 ? 1 : 0;
      x.push([a, b]);
      arm.push(u() < 1 / (1 + Math.exp(-(0.3 + 0.8 * a - 0.7 * b))) ? 1 : 0);
    }
    const fit = logisticRegression(x, arm);
    const w = propensityWeights(fit.fitted, arm, { estimand: 'overlap' }).weights;
    for (const col of [0, 1]) {
      const vals = x.map((r) => r[col] as number);
      const T = vals.filter((_, i) => arm[i] === 1);
      const C = vals.filter((_, i) => arm[i] === 0);
      const d = standardizedMeanDifference(T, C, {
        kind: col === 1 ? 'binary' : 'continuous',
        weightsTreated: w.filter((_, i) => arm[i] === 1),
        weightsControl: w.filter((_, i) => arm[i] === 0),
      });
      expect(Math.abs(d)).toBeLessThan(1e-9);
    }
  });
  it('stabilization leaves weighted SMDs unchanged (property)', () => {
    fc.assert(
      fc.property(
        // Subnormal covariate values (e.g. 5e-324) square to 0, so an arm of them has no variance and
        // the SMD rightly throws; they are not what this property is about.
        fc.array(fc.tuple(fc.double({ min: 0.05, max: 0.95, noNaN: true }), fc.constantFrom(0, 1), fc.double({ min: -10, max: 10, noNaN: true }).filter((x) => x === 0 || Math.abs(x) > 1e-150)), { minLength: 6, maxLength: 40 }),
        fc.constantFrom<Estimand>('ATE', 'ATT'),
        (rows, estimand) => {
          const nT = rows.filter((r) => r[1] === 1).length;
          fc.pre(nT >= 2 && rows.length - nT >= 2);
          const sc = rows.map((r) => r[0]);
          const tr = rows.map((r) => r[1]);
          const xT = rows.filter((r) => r[1] === 1).map((r) => r[2]);
          const xC = rows.filter((r) => r[1] === 0).map((r) => r[2]);
          fc.pre(new Set(xT).size > 1 && new Set(xC).size > 1);
          const smd = (stabilized: boolean) => {
            const w = propensityWeights(sc, tr, { estimand, stabilized }).weights;
            return standardizedMeanDifference(xT, xC, {
              kind: 'continuous',
              weightsTreated: w.filter((_, i) => tr[i] === 1),
              weightsControl: w.filter((_, i) => tr[i] === 0),
            });
          };
          const a = smd(false);
          expect(Math.abs(smd(true) - a)).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(a)));
        },
      ),
    );
  });
});

describe('propensityWeights: bad input', () => {
  it.each([
    ['unknown estimand', () => propensityWeights(e, t, { estimand: 'ATC' as Estimand }), RangeError, /options.estimand must be one of 'ATE', 'ATT', 'overlap'/],
    ['missing options', () => propensityWeights(e, t, undefined as unknown as { estimand: Estimand }), TypeError, /options must be an object/],
    ['stabilized overlap', () => propensityWeights(e, t, { estimand: 'overlap', stabilized: true }), RangeError, /not defined for estimand 'overlap'/],
    ['score of 0', () => propensityWeights([0, 0.5], [1, 0], { estimand: 'ATE' }), RangeError, /scores\[0\] must be a number strictly between 0 and 1, got 0/],
    ['score of 1', () => propensityWeights([0.5, 1], [1, 0], { estimand: 'ATE' }), RangeError, /scores\[1\]/],
    ['NaN score', () => propensityWeights([0.5, Number.NaN], [1, 0], { estimand: 'ATE' }), RangeError, /scores\[1\]/],
    ['mismatched lengths', () => propensityWeights([0.5, 0.5], [1], { estimand: 'ATE' }), RangeError, /treated has length 1 but scores has length 2/],
    ['empty', () => propensityWeights([], [], { estimand: 'ATE' }), RangeError, /scores must not be empty/],
    ['treated not 0/1', () => propensityWeights([0.5, 0.5], [1, 2], { estimand: 'ATE' }), RangeError, /treated\[1\] must be 0 or 1/],
    ['no controls', () => propensityWeights([0.5, 0.5], [1, 1], { estimand: 'ATE' }), RangeError, /no control participants/],
    ['scores not an array', () => propensityWeights(0.5 as unknown as number[], [1], { estimand: 'ATE' }), TypeError, /scores must be an array/],
  ])('rejects %s', (_l, call, type, message) => {
    expect(call).toThrow(type);
    expect(call).toThrow(message);
  });
});

describe('propensityWeights: unknown option keys', () => {
  it('rejects a misspelt key instead of ignoring it', () => {
    const call = () => propensityWeights([0.2, 0.5], [1, 0], { estimand: 'ATE', stabilised: true } as never);
    expect(call).toThrow(RangeError);
    expect(call).toThrow(/unknown option 'stabilised'/);
  });
});
