import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { createAccumulator, MomentAccumulator } from '../createAccumulator.js';

/** Full recompute, written out independently: two-pass weighted mean and Austin & Stuart variance. */
function recompute(rows: [number, number][]): { mean: number; variance: number; sumWeights: number } {
  let w = 0;
  let w2 = 0;
  let wx = 0;
  for (const [x, wi] of rows) {
    w += wi;
    w2 += wi * wi;
    wx += wi * x;
  }
  const mean = wx / w;
  let ss = 0;
  for (const [x, wi] of rows) ss += wi * (x - mean) ** 2;
  return { mean, variance: (w / (w * w - w2)) * ss, sumWeights: w };
}

function build(rows: [number, number][]): MomentAccumulator {
  const acc = createAccumulator();
  for (const [x, w] of rows) acc.add(x, w);
  return acc;
}

/** 1e-9 relative; for the mean the scale is max(|mean|, sd) so a mean near 0 is not judged on noise. */
function expectMatchesRecompute(acc: MomentAccumulator, rows: [number, number][]): void {
  const r = recompute(rows);
  const sd = Math.sqrt(r.variance);
  expect(acc.n).toBe(rows.length);
  expect(Math.abs(acc.sumWeights - r.sumWeights)).toBeLessThanOrEqual(1e-12 * r.sumWeights);
  expect(Math.abs(acc.mean - r.mean)).toBeLessThanOrEqual(1e-9 * Math.max(Math.abs(r.mean), sd, 1e-300));
  expect(Math.abs(acc.variance - r.variance)).toBeLessThanOrEqual(1e-9 * r.variance);
}

const row = fc.tuple(fc.double({ min: -1e4, max: 1e4, noNaN: true }), fc.double({ min: 0.01, max: 20, noNaN: true }));
const rowsArb = fc.array(row, { minLength: 2, maxLength: 200 }).filter((rows) => {
  const r = recompute(rows);
  return r.variance > 1e-6; // variance well above rounding noise so a relative comparison is meaningful
});

describe('createAccumulator: equals a full recompute to 1e-9 relative (property, fast-check)', () => {
  it('after a sequence of weighted adds', () => {
    fc.assert(fc.property(rowsArb, (rows) => expectMatchesRecompute(build(rows), rows)), { numRuns: 300 });
  });
  it('with unit weights, equals the n - 1 sample variance', () => {
    const acc = build([[2, 1], [4, 1], [4, 1], [4, 1], [5, 1], [5, 1], [7, 1], [9, 1]]);
    expect(acc.mean).toBe(5);
    expect(acc.variance).toBeCloseTo(32 / 7, 14); // classic 2,4,4,4,5,5,7,9 example: SS = 32
  });
  it('after merging per-site accumulators in any grouping (Chan et al.)', () => {
    fc.assert(
      fc.property(rowsArb, fc.array(fc.nat(), { minLength: 1, maxLength: 6 }), (rows, cutsRaw) => {
        const cuts = [...new Set(cutsRaw.map((c) => c % rows.length))].sort((a, b) => a - b);
        const parts: [number, number][][] = [];
        let start = 0;
        for (const c of [...cuts, rows.length]) {
          parts.push(rows.slice(start, c));
          start = c;
        }
        const merged = createAccumulator();
        for (const p of parts) merged.merge(build(p)); // includes empty parts
        expectMatchesRecompute(merged, rows);
      }),
      { numRuns: 300 },
    );
  });
  it('after removing some of the values (downdate)', () => {
    fc.assert(
      fc.property(rowsArb, rowsArb, (keep, drop) => {
        const acc = build([...keep, ...drop]);
        for (const [x, w] of drop) acc.remove(x, w);
        const r = recompute(keep);
        const sd = Math.sqrt(r.variance);
        // Downdating loses precision in proportion to the spread removed relative to the spread kept.
        const all = recompute([...keep, ...drop]);
        const amplification = Math.max(1, (all.variance * all.sumWeights) / (r.variance * r.sumWeights));
        expect(acc.n).toBe(keep.length);
        expect(Math.abs(acc.mean - r.mean)).toBeLessThanOrEqual(1e-9 * amplification * Math.max(Math.abs(r.mean), sd));
        expect(Math.abs(acc.variance - r.variance)).toBeLessThanOrEqual(1e-9 * amplification * r.variance);
      }),
      { numRuns: 200 },
    );
  });
  it('does not depend on the order of adds', () => {
    fc.assert(
      fc.property(rowsArb, (rows) => {
        const a = build(rows);
        const b = build([...rows].reverse());
        expect(Math.abs(a.variance - b.variance)).toBeLessThanOrEqual(1e-9 * a.variance);
      }),
    );
  });
});

describe('createAccumulator: persistence', () => {
  it('round-trips through JSON exactly and continues identically', () => {
    const a = build([[1.1, 1], [2.7, 0.5], [9.3, 2]]);
    const b = MomentAccumulator.fromState(JSON.parse(JSON.stringify(a)));
    expect(b.toJSON()).toEqual(a.toJSON());
    a.add(4.4, 1.5);
    b.add(4.4, 1.5);
    expect(b.variance).toBe(a.variance);
  });
  it('removing the last value empties it', () => {
    const a = createAccumulator().add(3, 2).remove(3, 2);
    expect(a.n).toBe(0);
    expect(a.sumWeights).toBe(0);
  });
  it('clone is independent', () => {
    const a = build([[1, 1], [2, 1]]);
    const b = a.clone().add(10);
    expect(a.n).toBe(2);
    expect(b.n).toBe(3);
  });
});

describe('createAccumulator: bad input', () => {
  it.each([
    ['NaN value', () => createAccumulator().add(Number.NaN), RangeError, /add: x must be a finite number, got NaN/],
    ['Infinity value', () => createAccumulator().add(Number.POSITIVE_INFINITY), RangeError, /add: x must be a finite number/],
    ['zero weight', () => createAccumulator().add(1, 0), RangeError, /add: w must be a finite number greater than 0, got 0/],
    ['negative weight', () => createAccumulator().add(1, -1), RangeError, /w must be a finite number greater than 0/],
    ['infinite weight', () => createAccumulator().add(1, Number.POSITIVE_INFINITY), RangeError, /w must be a finite number greater than 0/],
    ['remove from empty', () => createAccumulator().remove(1), RangeError, /remove: the accumulator is empty/],
    ['remove more weight than held', () => createAccumulator().add(1).add(2).remove(1, 5), RangeError, /not less than the total weight/],
    ['remove last with another weight', () => createAccumulator().add(1, 2).remove(1, 1), RangeError, /does not match the weight/],
    ['mean of empty', () => createAccumulator().mean, RangeError, /mean is undefined for an empty accumulator/],
    ['variance of one value', () => createAccumulator().add(3).variance, RangeError, /variance needs at least two values/],
    ['merge with a non-accumulator', () => createAccumulator().merge({} as MomentAccumulator), TypeError, /merge: other must be an accumulator/],
    ['fromState(null)', () => MomentAccumulator.fromState(null), TypeError, /fromState: state must be an object/],
    ['fromState wrong version', () => MomentAccumulator.fromState({ version: 2 }), RangeError, /state.version must be 1/],
    ['fromState NaN mean', () => MomentAccumulator.fromState({ version: 1, n: 1, sumWeights: 1, sumSquaredWeights: 1, mean: 'x', m2: 0 }), RangeError, /state.mean must be a finite number/],
    ['fromState fractional n', () => MomentAccumulator.fromState({ version: 1, n: 1.5, sumWeights: 1, sumSquaredWeights: 1, mean: 0, m2: 0 }), RangeError, /state.n must be a non-negative integer/],
    ['fromState inconsistent', () => MomentAccumulator.fromState({ version: 1, n: 0, sumWeights: 1, sumSquaredWeights: 1, mean: 0, m2: 0 }), RangeError, /inconsistent/],
  ])('rejects %s', (_label, call, type, message) => {
    expect(call).toThrow(type);
    expect(call).toThrow(message);
  });
});

describe('createAccumulator: values with a large common offset', () => {
  // Reference: the Austin & Stuart (Stat Med 2015;34:3661) weighted variance in exact rational
  // arithmetic (Python fractions) for x = 1e9 + (0, 1, 2, 3), w = (0.3, 1.7, 2, 1): mean 1e9 + 1.74,
  // variance 1781/1702. Without a shift, the first weighted add left M2 of order w |x| ulp(x)
  // and the variance came out 2.4e-8 relative off (found by the independent scipy cross-check).
  const xs = [0, 1, 2, 3].map((d) => 1e9 + d);
  const ws = [0.3, 1.7, 2, 1];
  const exact = 1781 / 1702;

  it('adds weighted values near 1e9 to 1e-12 relative', () => {
    const acc = createAccumulator();
    xs.forEach((x, i) => acc.add(x, ws[i]));
    expect(Math.abs(acc.variance - exact) / exact).toBeLessThan(1e-12);
    expect(acc.mean).toBeCloseTo(1e9 + 1.74, 6);
  });

  it('merges, removes and round-trips through JSON without losing those digits', () => {
    const a = createAccumulator().add(xs[0] as number, 0.3).add(xs[1] as number, 1.7);
    const b = createAccumulator().add(xs[2] as number, 2).add(xs[3] as number, 1).add(1e9 + 7, 0.9);
    b.remove(1e9 + 7, 0.9);
    const merged = MomentAccumulator.fromState(JSON.parse(JSON.stringify(a))).merge(b);
    expect(Math.abs(merged.variance - exact) / exact).toBeLessThan(1e-12);
  });

  it('reads a state without a shift (as built from SQL aggregates) as before', () => {
    const acc = MomentAccumulator.fromState({ version: 1, n: 3, sumWeights: 3, sumSquaredWeights: 3, mean: 2, m2: 2 });
    expect(acc.mean).toBe(2);
    expect(acc.variance).toBe(1);
    acc.add(6); // values 1, 2, 3, 6: mean 3, variance 14/3 (hand computation)
    expect(acc.mean).toBe(3);
    expect(acc.variance).toBeCloseTo(14 / 3, 12);
  });
});
