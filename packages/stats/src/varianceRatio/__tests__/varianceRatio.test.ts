import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { expectClose, loadBalanceFixture } from '../../balanceTestSupport/balanceTestSupport.js';
import { varianceRatio } from '../varianceRatio.js';

type Case = {
  name: string;
  kind: string;
  treated: number[];
  control: number[];
  weightsTreated?: number[];
  weightsControl?: number[];
  varianceRatio?: number;
};
const fixture = loadBalanceFixture<{ cases: Case[] }>('smd.json');

describe('varianceRatio: cross-check against numpy (fixture smd.json)', () => {
  // Source: numpy var(ddof=1) ratio; weighted: Austin & Stuart (2015) variance in numpy.
  for (const c of fixture.cases.filter((x) => x.varianceRatio !== undefined)) {
    it(`matches numpy for ${c.name}`, () => {
      const w = c.weightsTreated ? { treated: c.weightsTreated, control: c.weightsControl } : undefined;
      expectClose(varianceRatio(c.treated, c.control, w), c.varianceRatio as number, fixture.tolerance, {
        case: c.name,
        quantity: 'varianceRatio',
        input: c,
      });
    });
  }
  it('gives (5/3) / 0.5 for [1,2,3,4] vs [2,3] (hand computation)', () => {
    expect(varianceRatio([1, 2, 3, 4], [2, 3])).toBeCloseTo(10 / 3, 14);
  });
});

describe('varianceRatio: properties', () => {
  const arm = fc.array(fc.integer({ min: -1000, max: 1000 }), { minLength: 2, maxLength: 30 }).filter((xs) => new Set(xs).size > 1);
  it('inverts when the arms swap and is invariant to shift and scale', () => {
    fc.assert(
      fc.property(arm, arm, fc.integer({ min: -100, max: 100 }), fc.integer({ min: 1, max: 50 }), (t, c, shift, scale) => {
        const r = varianceRatio(t, c);
        expect(varianceRatio(c, t) * r).toBeCloseTo(1, 10);
        const f = (x: number) => x * scale + shift;
        expect(Math.abs(varianceRatio(t.map(f), c.map(f)) / r - 1)).toBeLessThan(1e-10);
      }),
    );
  });
});

describe('varianceRatio: bad input', () => {
  it.each([
    ['single control value', () => varianceRatio([1, 2], [1]), RangeError, /control needs at least 2 values/],
    ['empty treated', () => varianceRatio([], [1, 2]), RangeError, /treated needs at least 2 values, got 0/],
    ['NaN', () => varianceRatio([1, Number.NaN], [1, 2]), RangeError, /treated\[1\] must be finite/],
    ['constant control', () => varianceRatio([1, 2], [3, 3, 3]), RangeError, /control has zero variance/],
    ['constant treated', () => varianceRatio([3, 3], [1, 2]), RangeError, /treated has zero variance/],
    ['weights not an object', () => varianceRatio([1, 2], [1, 2], 4 as unknown as object), TypeError, /weights must be an object/],
    ['weights of the wrong length', () => varianceRatio([1, 2], [1, 2], { control: [1] }), RangeError, /weights.control has length 1 but control has length 2/],
    ['not an array', () => varianceRatio('12' as unknown as number[], [1, 2]), TypeError, /treated must be an array/],
  ])('rejects %s', (_label, call, type, message) => {
    expect(call).toThrow(type);
    expect(call).toThrow(message);
  });
});

describe('varianceRatio: the weights argument', () => {
  // Hand computation with the Austin & Stuart (2015) variance: treated 1, 2, 3, 4 with weights
  // 1, 1, 2, 2 (W = 6, W2 = 10, mean 17/6, sum w (x - mean)^2 = 41/6) gives 6/26 * 41/6 = 41/26;
  // control 2, 3 unweighted gives 0.5, so VR = 41/13.
  it('takes a pair [treated, control] the same as { treated, control }', () => {
    const asObject = varianceRatio([1, 2, 3, 4], [2, 3], { treated: [1, 1, 2, 2] });
    expect(asObject).toBeCloseTo(41 / 13, 12);
    expect(varianceRatio([1, 2, 3, 4], [2, 3], [[1, 1, 2, 2], undefined])).toBe(asObject);
  });
  it.each([
    ['a single weights array (it used to be ignored silently)', [1, 1, 2, 2]],
    ['an unknown key', { treatment: [1, 1, 2, 2] }],
  ])('rejects %s', (_l, weights) => {
    expect(() => varianceRatio([1, 2, 3, 4], [2, 3], weights as never)).toThrow(/weights/);
  });
});
