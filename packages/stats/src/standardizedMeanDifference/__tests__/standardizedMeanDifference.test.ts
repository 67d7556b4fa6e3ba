import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { expectClose, loadBalanceFixture } from '../../balanceTestSupport/balanceTestSupport.js';
import {
  standardizedMeanDifference,
  standardizedMeanDifferenceFromSummaries,
  type SmdKind,
} from '../standardizedMeanDifference.js';

type Case = {
  name: string;
  kind: SmdKind;
  treated: number[];
  control: number[];
  weightsTreated?: number[];
  weightsControl?: number[];
  smd: number;
};
const fixture = loadBalanceFixture<{ cases: Case[] }>('smd.json');

describe('standardizedMeanDifference: cross-check against numpy (fixture smd.json)', () => {
  // Source: Austin (2009) and Austin & Stuart (2015) formulas evaluated with numpy average/var.
  for (const c of fixture.cases) {
    it(`matches numpy for ${c.name}`, () => {
      const opts = {
        kind: c.kind,
        ...(c.weightsTreated ? { weightsTreated: c.weightsTreated } : {}),
        ...(c.weightsControl ? { weightsControl: c.weightsControl } : {}),
      };
      expectClose(standardizedMeanDifference(c.treated, c.control, opts), c.smd, fixture.tolerance, {
        case: c.name,
        quantity: 'smd',
        input: c,
      });
    });
  }
});

describe('standardizedMeanDifference: worked values', () => {
  it('gives d = 1 for means 10 and 8 with variances 4 and 4 (example in the balance reference notes)', () => {
    // treated mean 10 var 4, control mean 8 var 4 (hand-constructed, reference/balance notes section 5)
    expect(standardizedMeanDifference([8, 10, 12], [6, 8, 10], { kind: 'continuous' })).toBeCloseTo(1, 14);
    expect(standardizedMeanDifferenceFromSummaries({ mean: 10, variance: 4 }, { mean: 8, variance: 4 })).toBe(1);
  });
  it('uses the unweighted average of the two variances, not the n-weighted pooled variance', () => {
    // T: [0, 2] mean 1 var 2; C: nine 0s and a 3, mean 0.3 var 0.9 -> d = 0.7 / sqrt(1.45);
    // the t-test pooled variance (1 * 2 + 9 * 0.9) / 10 = 1.01 would give 0.6965 instead.
    const c = [0, 0, 0, 0, 0, 0, 0, 0, 0, 3];
    const d = standardizedMeanDifference([0, 2], c, { kind: 'continuous' });
    expect(d).toBeCloseTo(0.7 / Math.sqrt(1.45), 14);
    expect(Math.abs(d - 0.7 / Math.sqrt(1.01))).toBeGreaterThan(0.1);
  });
  it('binary: p_T = 0.75, p_C = 0.25 gives 0.5 / sqrt(0.1875)', () => {
    expect(standardizedMeanDifference([1, 1, 0, 1], [0, 1, 0, 0], { kind: 'binary' })).toBeCloseTo(0.5 / Math.sqrt(0.1875), 14);
  });
  it('equal weights give the unweighted SMD; rescaling one arm\'s weights changes nothing', () => {
    const t = [3.1, 4.2, 5.9, 2.2, 7.5];
    const c = [2.0, 3.3, 4.1, 1.9];
    const plain = standardizedMeanDifference(t, c, { kind: 'continuous' });
    const ones = standardizedMeanDifference(t, c, { kind: 'continuous', weightsTreated: [2, 2, 2, 2, 2], weightsControl: [1, 1, 1, 1] });
    expect(ones).toBeCloseTo(plain, 13);
    const w = [0.5, 1.2, 3.3, 0.9, 2.0];
    const a = standardizedMeanDifference(t, c, { kind: 'continuous', weightsTreated: w });
    const b = standardizedMeanDifference(t, c, { kind: 'continuous', weightsTreated: w.map((x) => x * 7.5) });
    expect(b).toBeCloseTo(a, 13);
  });
  it('accepts Float64Array input', () => {
    const d = standardizedMeanDifference(Float64Array.of(1, 2, 3), Float64Array.of(0, 1, 2), { kind: 'continuous' });
    expect(d).toBeCloseTo(1, 14);
  });
});

const arm = fc.array(fc.double({ min: -1000, max: 1000, noNaN: true }), { minLength: 2, maxLength: 40 }).filter((xs) => {
  const m = xs.reduce((a, b) => a + b, 0) / xs.length;
  return xs.some((x) => Math.abs(x - m) > 1e-3);
});

describe('standardizedMeanDifference: properties (fast-check)', () => {
  it('is invariant to shifting and to positive scaling of the covariate', () => {
    fc.assert(
      fc.property(arm, arm, fc.double({ min: -1e4, max: 1e4, noNaN: true }), fc.double({ min: 1e-3, max: 1e3, noNaN: true }), (t, c, shift, scale) => {
        const d = standardizedMeanDifference(t, c, { kind: 'continuous' });
        const f = (x: number) => x * scale + shift;
        const d2 = standardizedMeanDifference(t.map(f), c.map(f), { kind: 'continuous' });
        expect(Math.abs(d2 - d)).toBeLessThanOrEqual(1e-7 * Math.max(1, Math.abs(d)));
      }),
    );
  });
  it('changes sign when the arms are swapped (and when the covariate is negated)', () => {
    fc.assert(
      fc.property(arm, arm, (t, c) => {
        const d = standardizedMeanDifference(t, c, { kind: 'continuous' });
        expect(standardizedMeanDifference(c, t, { kind: 'continuous' }) === -d).toBe(true);
        const neg = standardizedMeanDifference(t.map((x) => -x), c.map((x) => -x), { kind: 'continuous' });
        expect(Math.abs(neg + d)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(d)));
      }),
    );
  });
  it('does not depend on row order', () => {
    fc.assert(
      fc.property(arm, arm, (t, c) => {
        const d = standardizedMeanDifference(t, c, { kind: 'continuous' });
        const r = standardizedMeanDifference([...t].reverse(), [...c].sort((a, b) => a - b), { kind: 'continuous' });
        expect(Math.abs(r - d)).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(d)));
      }),
    );
  });
  it('binary: swapping arms flips the sign', () => {
    fc.assert(
      fc.property(
        fc.array(fc.constantFrom(0, 1), { minLength: 1, maxLength: 30 }),
        fc.array(fc.constantFrom(0, 1), { minLength: 1, maxLength: 30 }),
        (t, c) => {
          let d: number;
          try {
            d = standardizedMeanDifference(t, c, { kind: 'binary' });
          } catch (e) {
            // Only the documented zero-variance case may throw.
            expect(String(e)).toMatch(/zero variance/);
            return;
          }
          expect(standardizedMeanDifference(c, t, { kind: 'binary' }) === -d).toBe(true);
        },
      ),
    );
  });
});

describe('standardizedMeanDifference: bad input', () => {
  const ok = [1, 2, 3];
  it.each([
    ['treated not an array', () => standardizedMeanDifference(3 as unknown as number[], ok, { kind: 'continuous' }), TypeError, /treated must be an array/],
    ['empty control', () => standardizedMeanDifference(ok, [], { kind: 'binary' }), RangeError, /control must not be empty/],
    ['single treated value (variance needed)', () => standardizedMeanDifference([1], ok, { kind: 'continuous' }), RangeError, /treated needs at least 2 values/],
    ['NaN in control', () => standardizedMeanDifference(ok, [1, Number.NaN], { kind: 'continuous' }), RangeError, /control\[1\] must be finite/],
    ['Infinity in treated', () => standardizedMeanDifference([1, Number.NEGATIVE_INFINITY], ok, { kind: 'continuous' }), RangeError, /treated\[1\] must be finite/],
    ['a string value', () => standardizedMeanDifference([1, '2'] as unknown as number[], ok, { kind: 'continuous' }), TypeError, /treated\[1\] must be a number/],
    ['unknown kind', () => standardizedMeanDifference(ok, ok, { kind: 'ordinal' as SmdKind }), RangeError, /options.kind must be one of 'continuous', 'binary', got "ordinal"/],
    ['missing options', () => standardizedMeanDifference(ok, ok, undefined as unknown as { kind: SmdKind }), TypeError, /options must be an object/],
    ['non-binary value with kind binary', () => standardizedMeanDifference([0, 1, 2], [0, 1], { kind: 'binary' }), RangeError, /treated\[2\] must be 0 or 1/],
    ['both arms constant', () => standardizedMeanDifference([5, 5, 5], [5, 5], { kind: 'continuous' }), RangeError, /both arms have zero variance/],
    ['binary with every value 1', () => standardizedMeanDifference([1, 1], [1, 1, 1], { kind: 'binary' }), RangeError, /zero variance/],
    ['weights of the wrong length', () => standardizedMeanDifference(ok, ok, { kind: 'continuous', weightsTreated: [1, 1] }), RangeError, /options.weightsTreated has length 2 but treated has length 3/],
    ['negative weight', () => standardizedMeanDifference(ok, ok, { kind: 'continuous', weightsControl: [1, -2, 1] }), RangeError, /options.weightsControl\[1\] must be non-negative/],
    ['NaN weight', () => standardizedMeanDifference(ok, ok, { kind: 'continuous', weightsControl: [1, Number.NaN, 1] }), RangeError, /options.weightsControl\[1\] must be finite/],
    ['all weight on one value', () => standardizedMeanDifference(ok, ok, { kind: 'continuous', weightsTreated: [0, 3, 0] }), RangeError, /treated needs at least two values with positive weight/],
    ['negative variance summary', () => standardizedMeanDifferenceFromSummaries({ mean: 1, variance: -1 }, { mean: 0, variance: 1 }), RangeError, /treated.variance must be at least 0/],
  ])('rejects %s', (_label, call, type, message) => {
    expect(call).toThrow(type);
    expect(call).toThrow(message);
  });
});

describe('standardizedMeanDifference: a large common offset and non-numbers', () => {
  // Reference: Austin (2009) formula in exact rational arithmetic (Python fractions) on these
  // doubles, 1e9 + N(0, 1) draws: d = -1.0298101236601036. Without a common shift the rounding
  // of the two means (ulp(1e9) = 1.2e-7) left d 2.5e-7 relative off (found by the independent
  // scipy cross-check).
  const offsetT = [999999999.6348306, 1000000000.326041, 1000000000.097701, 999999997.8596439, 999999997.5947006, 1000000000.7946707, 1000000000.5231246, 999999998.1150738, 999999999.2232553];
const offsetC = [1000000000.2888099, 999999999.319784, 1000000003.1020355, 1000000000.5117075, 1000000000.9522128, 1000000000.3644332, 999999999.7238802];
  it('keeps 1e-12 relative for values near 1e9', () => {
    const d = standardizedMeanDifference(offsetT, offsetC, { kind: 'continuous' });
    expect(Math.abs(d - -1.0298101236601036) / 1.0298101236601036).toBeLessThan(1e-12);
    expect(standardizedMeanDifference(offsetC, offsetT, { kind: 'continuous' })).toBe(-d);
  });
  it.each([
    ['null value', () => standardizedMeanDifference([1, null, 3] as unknown as number[], [2, 3, 4], { kind: 'continuous' }), /treated\[1\] must be a number, got null/],
    ['boolean value (continuous)', () => standardizedMeanDifference([1, 2, 3], [2, true, 4] as unknown as number[], { kind: 'continuous' }), /control\[1\] must be a number, got boolean/],
    ['null weight', () => standardizedMeanDifference([1, 2, 3], [2, 3, 4], { kind: 'continuous', weightsControl: [1, null, 1] as unknown as number[] }), /weightsControl\[1\] must be a number, got null/],
  ])('rejects a %s with TypeError (it used to count as 0 or 1)', (_label, call, message) => {
    expect(call).toThrow(TypeError);
    expect(call).toThrow(message);
  });
});

describe('standardizedMeanDifference: unknown option keys', () => {
  it('rejects a misspelt weights key instead of returning the unweighted SMD', () => {
    const call = () => standardizedMeanDifference([1, 2, 3], [2, 3, 5], { kind: 'continuous', weights: [1, 1, 1] } as never);
    expect(call).toThrow(RangeError);
    expect(call).toThrow(/unknown option 'weights'/);
  });
});
