import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { expectClose, loadBalanceFixture, type Tolerance } from '../../balanceTestSupport/balanceTestSupport.js';
import { summarize, type Summary } from '../summarize.js';

type Expected = Pick<
  Summary,
  'n' | 'mean' | 'variance' | 'sd' | 'median' | 'q1' | 'q3' | 'min' | 'max' | 'skewness' | 'excessKurtosis'
>;
type Fixture = {
  unweighted: { name: string; values: number[]; expected: Expected }[];
  weighted: { name: string; values: number[]; weights: number[]; expected: Expected }[];
  replicated: {
    name: string;
    values: number[];
    weights: number[];
    expected: { mean: number; skewness: number; excessKurtosis: number; median: number };
  };
};

const fixture = loadBalanceFixture<Fixture>('summarize.json');
const QUANTITIES = ['mean', 'variance', 'sd', 'median', 'q1', 'q3', 'min', 'max', 'skewness', 'excessKurtosis'] as const;

function compareAll(actual: Summary, expected: Expected, tol: Tolerance, name: string, input: unknown): void {
  expect(actual.n).toBe(expected.n);
  for (const q of QUANTITIES) {
    expectClose(actual[q], expected[q] as number, tol, { case: name, quantity: q, input });
  }
}

describe('summarize: cross-check against numpy/scipy (fixture summarize.json)', () => {
  // Source: numpy mean/var(ddof=1)/quantile(linear), scipy.stats.skew/kurtosis(bias=False).
  for (const c of fixture.unweighted) {
    it(`matches scipy for ${c.name} (tolerance ${fixture.tolerance.relative} relative)`, () => {
      compareAll(summarize(c.values), c.expected, fixture.tolerance, c.name, c.values);
    });
  }
  // Source: np.average, Austin & Stuart variance, np.quantile(weights=, method='inverted_cdf').
  for (const c of fixture.weighted) {
    it(`matches numpy for weighted ${c.name}`, () => {
      const s = summarize(c.values, c.weights);
      expect(s.weighted).toBe(true);
      compareAll(s, c.expected, fixture.tolerance, c.name, { values: c.values, weights: c.weights });
    });
  }
  it('with integer weights equals scipy biased moments of the replicated data', () => {
    const r = fixture.replicated;
    const s = summarize(r.values, r.weights);
    for (const q of ['mean', 'skewness', 'excessKurtosis', 'median'] as const) {
      expectClose(s[q], r.expected[q], fixture.tolerance, { case: r.name, quantity: q, input: r });
    }
  });
});

describe('summarize: missing values and small samples', () => {
  it('counts nulls as missing and ignores them', () => {
    const s = summarize([1, 2, null, 4, 10]);
    expect(s.missing).toBe(1);
    expect(s.n).toBe(4);
    expect(s.mean).toBe(4.25);
    expect(s.median).toBe(3);
    expect(s.q1).toBe(1.75); // type 7: h = 0.75 between 1 and 2
    expect(s.q3).toBe(5.5); // h = 2.25 between 4 and 10
  });
  it('ignores the weights at missing positions', () => {
    const a = summarize([1, null, 3, 5], [1, Number.NaN, 2, 1]);
    const b = summarize([1, 3, 5], [1, 2, 1]);
    expect(a.mean).toBe(b.mean);
    expect(a.variance).toBe(b.variance);
  });
  it('returns null variance, skewness and kurtosis for one value', () => {
    const s = summarize([7]);
    expect(s).toMatchObject({ n: 1, mean: 7, median: 7, variance: null, sd: null, skewness: null, excessKurtosis: null });
  });
  it('returns null skewness below n = 3 and null kurtosis below n = 4', () => {
    expect(summarize([1, 2]).skewness).toBeNull();
    expect(summarize([1, 2, 4]).skewness).not.toBeNull();
    expect(summarize([1, 2, 4]).excessKurtosis).toBeNull();
  });
  it('reports zero variance and null shape statistics for constant data (even 0.1 repeated)', () => {
    const s = summarize([0.1, 0.1, 0.1, 0.1, 0.1]);
    expect(s.variance).toBe(0);
    expect(s.skewness).toBeNull();
    expect(s.excessKurtosis).toBeNull();
  });
  it('does not depend on row order (property)', () => {
    fc.assert(
      fc.property(
        fc.array(fc.double({ min: -1e6, max: 1e6, noNaN: true }), { minLength: 4, maxLength: 60 }),
        fc.integer(),
        (xs, seed) => {
          const shuffled = [...xs];
          let s = seed >>> 0;
          for (let i = shuffled.length - 1; i > 0; i--) {
            s = (Math.imul(s, 1103515245) + 12345) >>> 0;
            const j = s % (i + 1);
            [shuffled[i], shuffled[j]] = [shuffled[j] as number, shuffled[i] as number];
          }
          const a = summarize(xs);
          const b = summarize(shuffled);
          for (const q of ['median', 'q1', 'q3', 'min', 'max'] as const) expect(b[q]).toBe(a[q]);
          const scale = Math.max(...xs.map(Math.abs), 1);
          expect(Math.abs(b.mean - a.mean)).toBeLessThanOrEqual(1e-12 * scale);
          expect(Math.abs((b.variance as number) - (a.variance as number))).toBeLessThanOrEqual(1e-9 * scale * scale);
        },
      ),
    );
  });
});

describe('summarize: bad input', () => {
  it.each([
    ['not an array', 5, TypeError, /summarize: values must be an array/],
    ['NaN', [1, Number.NaN], RangeError, /values\[1\] must be finite/],
    ['Infinity', [Number.POSITIVE_INFINITY], RangeError, /values\[0\] must be finite/],
    ['a string entry', [1, '2'], TypeError, /values\[1\] must be a number or null/],
    ['empty', [], RangeError, /no non-missing entries/],
    ['all missing', [null, null], RangeError, /no non-missing entries \(length 2, 2 missing\)/],
  ])('rejects %s', (_label, input, type, message) => {
    expect(() => summarize(input as number[])).toThrow(type);
    expect(() => summarize(input as number[])).toThrow(message);
  });
  it('rejects weights of the wrong length', () => {
    expect(() => summarize([1, 2, 3], [1, 1])).toThrow(/weights has length 2 but values has length 3/);
  });
  it('rejects negative, non-finite and all-zero weights', () => {
    expect(() => summarize([1, 2, 3], [1, -1, 1])).toThrow(RangeError);
    expect(() => summarize([1, 2, 3], [1, -1, 1])).toThrow(/must be non-negative/);
    expect(() => summarize([1, 2, 3], [1, Number.POSITIVE_INFINITY, 1])).toThrow(/must be finite/);
    expect(() => summarize([1, 2, 3], [0, 0, 0])).toThrow(/all zero/);
  });
  it('rejects weights that are not an array', () => {
    expect(() => summarize([1, 2], 3 as unknown as number[])).toThrow(TypeError);
  });
});

describe('summarize: a large common offset', () => {
  // Reference: adjusted Fisher-Pearson G1 in exact rational arithmetic (Python fractions) on these
  // doubles (1e9 + N(0, 1)); scipy.stats.skew(x - 1e9, bias=False) agrees to 4e-16. Without a
  // shift the rounded mean left G1 3e-7 relative off (found by the independent scipy cross-check).
  const offsetT = [999999999.6348306, 1000000000.326041, 1000000000.097701, 999999997.8596439, 999999997.5947006, 1000000000.7946707, 1000000000.5231246, 999999998.1150738, 999999999.2232553];
  it('keeps the skewness to 1e-12 relative for values near 1e9', () => {
    const s = summarize(offsetT);
    expect(Math.abs((s.skewness as number) - -0.41451376080698815) / 0.41451376080698815).toBeLessThan(1e-12);
  });
});
