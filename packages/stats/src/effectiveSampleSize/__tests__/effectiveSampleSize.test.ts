import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { effectiveSampleSize } from '../effectiveSampleSize.js';

describe('effectiveSampleSize (Kish 1965: (sum w)^2 / sum w^2)', () => {
  it('equals n for equal weights and the hand value for unequal ones', () => {
    expect(effectiveSampleSize([2, 2, 2, 2, 2])).toBe(5);
    expect(effectiveSampleSize([1, 1, 1, 5])).toBeCloseTo(64 / 28, 14);
    expect(effectiveSampleSize(Float64Array.of(0, 3, 0))).toBe(1);
  });
  it('lies between 1 and n and is scale invariant (property)', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: 0.001, max: 100, noNaN: true }), { minLength: 1, maxLength: 50 }), fc.double({ min: 0.01, max: 100, noNaN: true }), (w, k) => {
        const e = effectiveSampleSize(w);
        expect(e).toBeGreaterThanOrEqual(1 - 1e-12);
        expect(e).toBeLessThanOrEqual(w.length * (1 + 1e-12));
        expect(effectiveSampleSize(w.map((x) => x * k))).toBeCloseTo(e, 9);
      }),
    );
  });
  it.each([
    ['empty', [], RangeError, /weights must not be empty/],
    ['not an array', 4, TypeError, /weights must be an array/],
    ['negative', [1, -1], RangeError, /weights\[1\] must be non-negative/],
    ['NaN', [1, Number.NaN], RangeError, /weights\[1\] must be finite/],
    ['all zero', [0, 0], RangeError, /all zero/],
  ])('rejects %s', (_l, input, type, message) => {
    expect(() => effectiveSampleSize(input as number[])).toThrow(type);
    expect(() => effectiveSampleSize(input as number[])).toThrow(message);
  });
});

describe('effectiveSampleSize: non-numbers', () => {
  it('rejects a null weight with TypeError (it used to count as 0)', () => {
    expect(() => effectiveSampleSize([1, null, 3] as unknown as number[])).toThrow(TypeError);
    expect(() => effectiveSampleSize([1, null, 3] as unknown as number[])).toThrow(/weights\[1\] must be a number, got null/);
  });
});
