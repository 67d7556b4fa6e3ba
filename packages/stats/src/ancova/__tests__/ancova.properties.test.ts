import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { ancova } from '../ancova.js';
import { oneWayAnova } from '../../oneWayAnova/oneWayAnova.js';
import { significantDigits } from '../../referenceTestSupport/referenceTestSupport.js';

const close = (a: number, b: number, digits: number): boolean => significantDigits(a, b) >= digits || Math.abs(a - b) < 1e-12;

/** Random data: 2-4 groups of 3-12 rows, outcome and covariates from bounded doubles. */
const dataset = fc
  .record({
    sizes: fc.array(fc.integer({ min: 3, max: 12 }), { minLength: 2, maxLength: 4 }),
    seedValues: fc.array(fc.double({ min: -100, max: 100, noNaN: true }), { minLength: 160, maxLength: 160 }),
  })
  .map(({ sizes, seedValues }) => {
    const group: string[] = [];
    sizes.forEach((s, g) => {
      for (let i = 0; i < s; i++) group.push(`g${g}`);
    });
    const n = group.length;
    const outcome = group.map((_, i) => (seedValues[i] as number) + (i % 3));
    const cov = group.map((_, i) => (seedValues[(i + 50) % 160] as number) * 0.5 + (i % 5));
    return { group, outcome, cov, n };
  });

describe('ancova properties (fast-check)', () => {
  it('with no covariate, ancova equals oneWayAnova (group F, SS, error MS; adjusted means are the group means)', () => {
    fc.assert(
      fc.property(dataset, ({ group, outcome }) => {
        const levels = [...new Set(group)];
        const groups = levels.map((lv) => outcome.filter((_, i) => group[i] === lv));
        const one = oneWayAnova(groups);
        const r = ancova({ outcome, group, covariates: {} });
        const t = r.terms.find((x) => x.term === 'group');
        expect(t).toBeDefined();
        expect(close(t?.ss as number, one.between.ss, 9)).toBe(true);
        expect(close(t?.f as number, one.between.f, 9)).toBe(true);
        expect(close(r.error.ss, one.within.ss, 9)).toBe(true);
        expect(r.error.df).toBe(one.within.df);
        r.adjustedMeans.forEach((m, g) => expect(close(m.mean, one.groups[g]?.mean as number, 10)).toBe(true));
      }),
      { numRuns: 60 },
    );
  });

  it('results do not depend on row order', () => {
    fc.assert(
      fc.property(
        dataset.chain((d) => fc.tuple(fc.constant(d), fc.shuffledSubarray([...Array(d.n).keys()], { minLength: d.n, maxLength: d.n }))),
        ([d, perm]) => {
          const a = ancova({ outcome: d.outcome, group: d.group, covariates: { c: d.cov } });
          const b = ancova({
            outcome: perm.map((i) => d.outcome[i] as number),
            group: perm.map((i) => d.group[i] as string),
            covariates: { c: perm.map((i) => d.cov[i] as number) },
          });
          a.terms.forEach((t, j) => expect(close(b.terms[j]?.ss as number, t.ss, 8)).toBe(true));
          expect(close(b.error.ss, a.error.ss, 9)).toBe(true);
          for (const m of a.adjustedMeans) {
            const other = b.adjustedMeans.find((x) => x.group === m.group);
            expect(close(other?.mean as number, m.mean, 9)).toBe(true);
            expect(close(other?.se as number, m.se, 9)).toBe(true);
          }
        },
      ),
      { numRuns: 60 },
    );
  });

  it('shifting and scaling a covariate changes neither the group test nor the adjusted means', () => {
    fc.assert(
      fc.property(dataset, fc.double({ min: -1e4, max: 1e4, noNaN: true }), fc.double({ min: 0.01, max: 100, noNaN: true }), (d, shift, scale) => {
        const a = ancova({ outcome: d.outcome, group: d.group, covariates: { c: d.cov } });
        const b = ancova({ outcome: d.outcome, group: d.group, covariates: { c: d.cov.map((v) => shift + scale * v) } });
        const ga = a.terms.find((t) => t.term === 'group');
        const gb = b.terms.find((t) => t.term === 'group');
        expect(close(gb?.f as number, ga?.f as number, 7)).toBe(true);
        a.adjustedMeans.forEach((m, i) => expect(close(b.adjustedMeans[i]?.mean as number, m.mean, 8)).toBe(true));
      }),
      { numRuns: 40 },
    );
  });
});
