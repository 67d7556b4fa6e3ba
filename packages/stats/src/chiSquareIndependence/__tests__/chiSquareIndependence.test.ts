import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { normalCdfUpper } from '../../distributions/distributions.js';
import { expectAbs, expectDigits, expectRel, loadFixture } from '../../referenceTestSupport/referenceTestSupport.js';
import { chiSquareIndependence, SMALL_EXPECTED_COUNT } from '../chiSquareIndependence.js';

describe('chiSquareIndependence against published examples', () => {
  it('Agresti (2007) p. 39, party identification by gender: X^2 30.070149, df 2, p 2.953589e-7 (confirmed, secondary)', () => {
    // Table from Agresti, An Introduction to Categorical Data Analysis, 2nd ed., 2007, p. 39
    // (cited with these counts by the R documentation of chisq.test). X^2 and p as printed, to 8
    // and 7 digits, in a vendor manual's worked example of Pearson's chi-square on the same table
    // (secondary copy); the textbook prints X^2 = 30.1 (from memory).
    const r = chiSquareIndependence([
      [762, 327, 468],
      [484, 239, 477],
    ]);
    expectRel('X^2 30.070149', r.statistic, '30.070149', 0.5e-6 / 30.070149);
    expectRel('p 2.953589e-7', r.p, '2.953589E-7', 0.5e-13 / 2.953589e-7);
    expect(r.df).toBe(2);
    expect(r.n).toBe(2757);
    // Estimated expected frequencies of the textbook's table (from memory, 1 decimal).
    const printed = [
      [703.7, 319.6, 533.7],
      [542.3, 246.4, 411.3],
    ];
    printed.forEach((row, i) => row.forEach((e, j) => expectAbs(`expected[${i}][${j}] ${e} (memory)`, r.expected[i]![j]!, e, 0.05)));
    expect(r.smallExpected).toBe(false);
  });

  it('General Social Survey job loss x job satisfaction (3 x 3): R chisq.test X^2 39.0459, df 4, p 6.816e-08 and its expected counts (secondary)', () => {
    // R output reproduced in a published statistics exercise (secondary copy of R's printout).
    const r = chiSquareIndependence([
      [62, 265, 348],
      [16, 17, 14],
      [12, 15, 16],
    ]);
    expectRel('X^2 39.0459', r.statistic, '39.0459', 0.5e-4 / 39.0459);
    expectRel('p 6.816e-08', r.p, '6.816e-08', 0.5e-11 / 6.816e-8);
    expect(r.df).toBe(4);
    const printed = [
      ['79.411765', '262.05882', '333.52941'],
      ['5.529412', '18.24706', '23.22353'],
      ['5.058824', '16.69412', '21.24706'],
    ];
    printed.forEach((row, i) => row.forEach((e, j) => expectDigits(`expected[${i}][${j}] ${e}`, r.expected[i]![j]!, e, 6.5)));
    expect(r.minExpected).toBeCloseTo(5.058824, 6);
    expect(r.smallExpected).toBe(false);
  });

  it('pay type x job satisfaction (2 x 3; Doane & Seward, Applied Statistics in Business and Economics, p. 688 exercise): chi-square 4.54309, p 0.10315 (secondary)', () => {
    // Two independent published worked solutions of the same exercise (one from software output
    // printed to 6 digits, one from a spreadsheet add-in: expected 15.28, 13.80, 5.92 ...).
    const r = chiSquareIndependence([
      [20, 13, 2],
      [135, 127, 58],
    ]);
    expectRel('chi-square 4.54309', r.statistic, '4.54309', 0.5e-5 / 4.54309);
    expectRel('p 0.10315', r.p, '0.10315', 0.5e-5 / 0.10315);
    const printed = [
      [15.28, 13.8, 5.92],
      [139.72, 126.2, 54.08],
    ];
    printed.forEach((row, i) => row.forEach((e, j) => expectAbs(`expected[${i}][${j}] ${e}`, r.expected[i]![j]!, e, 0.005)));
    expect(r.cellsBelowSmallExpected).toBe(0);
  });
});

describe('chiSquareIndependence against scipy 1.17.1 chi2_contingency(correction=False) (generated fixture)', () => {
  type Fixture = { chiSquare: Array<{ table: number[][]; statistic: number; p: number; df: number; expected: number[][] }> };
  const { chiSquare } = loadFixture<Fixture>('generated/contingency-scipy.json');
  it.each(chiSquare.map((c, i) => [i, `${c.table.length}x${c.table[0]!.length}`, c] as const))(
    'case %i (%s): X^2 and expected to 1e-12, p to 1e-7 relative (1e-15 absolute below 1e-9)',
    (_, __, c) => {
      const r = chiSquareIndependence(c.table);
      expect(r.df, `df of ${JSON.stringify(c.table)}`).toBe(c.df);
      expectRel(`scipy X^2 of ${JSON.stringify(c.table)}`, r.statistic, c.statistic, 1e-12);
      // jstat's incomplete gamma: ~1e-7 relative; the upper tail is 1 - CDF, so below ~1e-15 it
      // is 0 (scipy returns 0.0 itself for the two largest tables).
      if (c.p > 1e-9) expectRel(`scipy p of ${JSON.stringify(c.table)}`, r.p, c.p, 1e-7);
      else expectAbs(`scipy p of ${JSON.stringify(c.table)}`, r.p, c.p, 1e-15);
      c.expected.forEach((row, i) => row.forEach((e, j) => expectRel(`scipy expected[${i}][${j}]`, r.expected[i]![j]!, e, 1e-12)));
      const min = Math.min(...c.expected.flat());
      expect(r.minExpected).toBeCloseTo(min, 12);
      expect(r.smallExpected).toBe(min < SMALL_EXPECTED_COUNT);
      expect(r.cellsBelowSmallExpected).toBe(c.expected.flat().filter((e) => e < SMALL_EXPECTED_COUNT).length);
    },
  );
});

describe('chiSquareIndependence identities', () => {
  const twoByTwo = fc
    .tuple(fc.integer({ min: 0, max: 300 }), fc.integer({ min: 0, max: 300 }), fc.integer({ min: 0, max: 300 }), fc.integer({ min: 0, max: 300 }))
    .filter(([a, b, c, d]) => a + b > 0 && c + d > 0 && a + c > 0 && b + d > 0);

  it('2 x 2: X^2 equals z^2 of the pooled two-proportion z test, and p equals the two-sided normal p (published formulas; Agresti 2007 §2.4, memory)', () => {
    fc.assert(
      fc.property(twoByTwo, ([a, b, c, d]) => {
        const r = chiSquareIndependence([
          [a, b],
          [c, d],
        ]);
        // Columns are the two groups: p1 = a / (a + c), p2 = b / (b + d).
        const n1 = a + c;
        const n2 = b + d;
        const pooled = (a + b) / (n1 + n2);
        const variance = pooled * (1 - pooled) * (1 / n1 + 1 / n2);
        if (variance === 0) return; // a row sums to 0 is excluded above; here one level is empty overall
        const z = (a / n1 - b / n2) / Math.sqrt(variance);
        expectRel(`X^2 = z^2 for [[${a}, ${b}], [${c}, ${d}]]`, r.statistic, z * z, 1e-10);
        const normalP = 2 * normalCdfUpper(Math.abs(z));
        // Incomplete gamma (jstat) against erfc / Mills' ratio: two different computations.
        if (normalP > 1e-9) expectRel(`chi2(1) p = 2 Q(|z|) for [[${a}, ${b}], [${c}, ${d}]]`, r.p, normalP, 2e-7);
        else expectAbs('tiny p', r.p, normalP, 1e-15);
      }),
      { seed: 20261202, numRuns: 300 },
    );
  });

  it('df 2: p = exp(-X^2 / 2) (chi-square with 2 df is exponential with mean 2)', () => {
    for (const t of [
      [[762, 327, 468], [484, 239, 477]],
      [[20, 13, 2], [135, 127, 58]],
      [[5, 9], [7, 1], [3, 6]],
    ]) {
      const r = chiSquareIndependence(t);
      expect(r.df).toBe(2);
      expectRel(`exp(-X^2/2) for ${JSON.stringify(t)}`, r.p, Math.exp(-r.statistic / 2), 1e-7);
    }
  });

  it('independence table: X^2 = 0 and p = 1; expected counts keep the margins; transposing or reordering rows changes nothing', () => {
    const flat = chiSquareIndependence([
      [10, 20, 30],
      [20, 40, 60],
    ]);
    expect(flat.statistic).toBe(0);
    expect(flat.p).toBe(1);
    const t = [
      [12, 5, 9],
      [3, 14, 2],
      [7, 7, 11],
    ];
    const r = chiSquareIndependence(t);
    r.expected.forEach((row, i) => expectRel(`expected row ${i} total`, row.reduce((a, b) => a + b, 0), t[i]!.reduce((a, b) => a + b, 0), 1e-14));
    const transposed = chiSquareIndependence(t[0]!.map((_, j) => t.map((row) => row[j]!)));
    expectRel('transposed X^2', transposed.statistic, r.statistic, 1e-13);
    const reordered = chiSquareIndependence([t[2]!, t[0]!, t[1]!]);
    expectRel('rows reordered X^2', reordered.statistic, r.statistic, 1e-13);
    expect(r.p).toBe(reordered.p);
  });

  it('flags small expected counts (rule: any expected count below 5, common practice)', () => {
    const r = chiSquareIndependence([
      [1, 4],
      [9, 6],
    ]);
    // Margins 5, 15 and 10, 10 of 20: expected 2.5, 2.5, 7.5, 7.5.
    expect(r.minExpected).toBe(2.5);
    expect(r.cellsBelowSmallExpected).toBe(2);
    expect(r.smallExpected).toBe(true);
  });
});

describe('chiSquareIndependence bad input', () => {
  it('rejects non-tables, too few rows or columns, ragged rows, bad counts and empty levels, naming the entry', () => {
    expect(() => chiSquareIndependence('x' as unknown as number[][])).toThrow(TypeError);
    expect(() => chiSquareIndependence([[1, 2]])).toThrow(/table needs at least 2 rows, got 1/);
    expect(() => chiSquareIndependence([[1], [2]])).toThrow(/table needs at least 2 columns, got 1/);
    expect(() => chiSquareIndependence([[1, 2], [3]])).toThrow(/table\[1\] has 1 entries but table\[0\] has 2/);
    expect(() => chiSquareIndependence([[1, 2], [3, -1]])).toThrow(/table\[1\]\[1\] must be a non-negative integer count, got -1/);
    expect(() => chiSquareIndependence([[1, 2], [3, 1.5]])).toThrow(RangeError);
    expect(() => chiSquareIndependence([[1, 2], [3, Number.NaN]])).toThrow(RangeError);
    expect(() => chiSquareIndependence([[1, 2], [3, '4' as unknown as number]])).toThrow(/table\[1\]\[1\] must be a number, got string/);
    expect(() => chiSquareIndependence([[1, 2], null as unknown as number[]])).toThrow(/table\[1\] must be an array of counts/);
    expect(() => chiSquareIndependence([[1, 2], [0, 0]])).toThrow(/table\[1\] sums to 0/);
    expect(() => chiSquareIndependence([[1, 0], [3, 0]])).toThrow(/column 1 sums to 0/);
  });
});
