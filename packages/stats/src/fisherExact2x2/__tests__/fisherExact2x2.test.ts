import { createRequire } from 'node:module';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { expectAbs, expectRel, loadFixture } from '../../referenceTestSupport/referenceTestSupport.js';
import { fisherExact2x2 } from '../fisherExact2x2.js';

// jstat's hypergeometric density (its own iterative product, no log-factorials): an independent
// computation of each table's probability.
const jStat = createRequire(import.meta.url)('jstat') as { hypgeom: { pdf(k: number, N: number, m: number, n: number): number } };

describe('fisherExact2x2 against published examples', () => {
  it("Fisher's tea-tasting experiment [[3, 1], [1, 3]]: one-sided 0.2429 (Agresti 1990 p. 61f, as printed in R's fisher.test documentation), two-sided 0.4857 (well-known published value; exactly 34/70)", () => {
    // Fisher, The Design of Experiments (1935), ch. 2: 8 cups, 4 with milk first; the lady
    // picks 3 of the 4 correctly. Under the null the counts 0..4 have probabilities
    // 1, 16, 36, 16, 1 out of C(8, 4) = 70 (exact enumeration).
    const r = fisherExact2x2([
      [3, 1],
      [1, 3],
    ]);
    expectAbs('one-sided 0.2429', r.pGreater, '0.2429', 0.00005);
    expectAbs('two-sided 0.4857', r.p, '0.4857', 0.00005);
    expectRel('two-sided = 34/70 (exact)', r.p, 34 / 70, 1e-13);
    expectRel('one-sided = 17/70 (exact)', r.pGreater, 17 / 70, 1e-13);
    expectRel('P(observed) = 16/70 (exact)', r.probability, 16 / 70, 1e-13);
    expectRel('pLess = 69/70 (exact)', r.pLess, 69 / 70, 1e-13);
  });

  it("Fisher's like-sex twins and criminal convictions [[2, 10], [15, 3]] (Fisher 1962/1970): two-sided 0.0005367, one-sided (less) 0.0004652 (R output, from memory)", () => {
    // Dizygotic: 2 convicted, 15 not; monozygotic: 10 convicted, 3 not (R's Convictions matrix).
    const r = fisherExact2x2([
      [2, 15],
      [10, 3],
    ]);
    expectAbs('two-sided 0.0005367 (memory)', r.p, '0.0005367', 0.5e-7);
    expectAbs('one-sided 0.0004652 (memory)', r.pLess, '0.0004652', 0.5e-7);
  });
});

describe('fisherExact2x2 against scipy 1.17.1 fisher_exact (generated fixture)', () => {
  type Fixture = { fisher: Array<{ table: number[][]; p: number; pLess: number; pGreater: number }> };
  const { fisher } = loadFixture<Fixture>('generated/contingency-scipy.json');
  it.each(fisher.map((c, i) => [i, JSON.stringify(c.table), c] as const))('case %i %s: two-sided, less and greater to 1e-10 relative', (_, __, c) => {
    const r = fisherExact2x2(c.table);
    expectRel(`scipy two-sided of ${JSON.stringify(c.table)}`, r.p, c.p, 1e-10);
    expectRel(`scipy less of ${JSON.stringify(c.table)}`, r.pLess, c.pLess, 1e-10);
    expectRel(`scipy greater of ${JSON.stringify(c.table)}`, r.pGreater, c.pGreater, 1e-10);
  });
});

describe('fisherExact2x2 against jstat hypergeometric probabilities, and identities', () => {
  const table = fc
    .tuple(fc.integer({ min: 0, max: 40 }), fc.integer({ min: 0, max: 40 }), fc.integer({ min: 0, max: 40 }), fc.integer({ min: 0, max: 40 }))
    .filter(([a, b, c, d]) => a + b > 0 && c + d > 0 && a + c > 0 && b + d > 0);

  it('the two-sided p equals the sum of jStat.hypgeom.pdf over tables no more likely than the observed one', () => {
    fc.assert(
      fc.property(table, ([a, b, c, d]) => {
        const r1 = a + b;
        const c1 = a + c;
        const n = a + b + c + d;
        const pdf = (x: number) => jStat.hypgeom.pdf(x, n, r1, c1);
        const observed = pdf(a);
        let two = 0;
        let less = 0;
        for (let x = Math.max(0, c1 - (c + d)); x <= Math.min(r1, c1); x++) {
          const px = pdf(x);
          if (px <= observed * (1 + 1e-7)) two += px;
          if (x <= a) less += px;
        }
        const r = fisherExact2x2([
          [a, b],
          [c, d],
        ]);
        const label = `[[${a}, ${b}], [${c}, ${d}]]`;
        expectRel(`P(observed) vs jstat, ${label}`, r.probability, observed, 1e-10);
        expectRel(`two-sided vs jstat, ${label}`, r.p, Math.min(1, two), 1e-9);
        expectRel(`less vs jstat, ${label}`, r.pLess, Math.min(1, less), 1e-9);
      }),
      { seed: 20261202, numRuns: 300 },
    );
  });

  it('pLess + pGreater - P(observed) = 1; swapping the rows swaps less and greater and keeps the two-sided p; transposing changes nothing', () => {
    fc.assert(
      fc.property(table, ([a, b, c, d]) => {
        const r = fisherExact2x2([
          [a, b],
          [c, d],
        ]);
        expectRel('less + greater - P = 1', r.pLess + r.pGreater - r.probability, 1, 1e-12);
        const swapped = fisherExact2x2([
          [c, d],
          [a, b],
        ]);
        expectRel('swapped rows: less <-> greater', swapped.pLess, r.pGreater, 1e-12);
        expectRel('swapped rows: two-sided', swapped.p, r.p, 1e-12);
        const transposed = fisherExact2x2([
          [a, c],
          [b, d],
        ]);
        expectRel('transposed: two-sided', transposed.p, r.p, 1e-12);
        expect(r.p).toBeLessThanOrEqual(1);
        expect(r.p).toBeGreaterThanOrEqual(r.probability * (1 - 1e-12));
      }),
      { seed: 20261203, numRuns: 300 },
    );
  });

  it('a table as likely as the most likely one counts every table: p is exactly 1 (normalised by the sum over the support)', () => {
    expect(fisherExact2x2([[2, 2], [48, 48]]).p).toBe(1);
    expect(fisherExact2x2([[5, 5], [5, 5]]).p).toBe(1);
    expect(fisherExact2x2([[1, 0], [0, 200]]).p).toBeLessThan(1);
  });

  it('log-factorials beyond the exact range (N = 3000) agree with jstat on a large table', () => {
    const r = fisherExact2x2([
      [1200, 310],
      [1150, 340],
    ]);
    expectRel('P(observed), N = 3000', r.probability, jStat.hypgeom.pdf(1200, 3000, 1510, 2350), 1e-9);
  });
});

describe('fisherExact2x2 bad input', () => {
  it('rejects tables that are not 2 x 2, bad counts and empty margins', () => {
    expect(() => fisherExact2x2([[1, 2, 3], [4, 5, 6]])).toThrow(/table must be 2 x 2, got 2 x 3/);
    expect(() => fisherExact2x2([[1, 2], [3, 4], [5, 6]])).toThrow(/table must be 2 x 2, got 3 x 2/);
    expect(() => fisherExact2x2([[1, 2], [3, -4]])).toThrow(/table\[1\]\[1\] must be a non-negative integer count/);
    expect(() => fisherExact2x2([[0, 0], [3, 4]])).toThrow(/table\[0\] sums to 0/);
    expect(() => fisherExact2x2({} as unknown as number[][])).toThrow(TypeError);
  });
});
