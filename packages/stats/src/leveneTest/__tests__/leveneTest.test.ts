import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { leveneTest } from '../leveneTest.js';
import { expectDigits, expectRel, loadFixture } from '../../referenceTestSupport/referenceTestSupport.js';

type Gear = {
  data: Array<{ batch: string; diameters: string[] }>;
  published: { levene_test: { test_statistic_W: string; df_numerator: number; df_denominator: number }; handbook_R_script_outputs: Record<string, string> };
  derived_exact_not_published: Record<string, string>;
};

describe('leveneTest: NIST/SEMATECH e-Handbook §1.3.5.10 gear-diameter example', () => {
  const g = loadFixture<Gear>('reference/nist-handbook/gear-diameter.json');
  const groups = g.data.map((b) => b.diameters.map(Number));
  const r = leveneTest(groups, { center: 'median' });

  it('median-centred W = 1.705910 with (9, 90) df (confirmed, secondary; printed W is off in its 6th digit, so 1e-5 relative)', () => {
    expectRel('e-Handbook W', r.statistic, g.published.levene_test.test_statistic_W, 1e-5);
    expect(r.df1).toBe(g.published.levene_test.df_numerator);
    expect(r.df2).toBe(g.published.levene_test.df_denominator);
    expect(r.center).toBe('median');
  });
  it('handbook R-script output: F 1.7059, p 0.09908 (mirrored R outputs, confirmed secondary)', () => {
    const out = g.published.handbook_R_script_outputs;
    expectRel('R F', r.statistic, out.levene_median_F as string, 0.00005 / 1.7059);
    expectRel('R p', r.p, out.levene_median_p_value as string, 0.000005 / 0.09908);
  });
  it('exact recomputation (derived_exact_not_published; not external evidence): median and mean W', () => {
    expectDigits('derived median W', r.statistic, g.derived_exact_not_published.levene_median_W as string, 12);
    expectDigits('derived mean W', leveneTest(groups, { center: 'mean' }).statistic, g.derived_exact_not_published.levene_mean_W as string, 12);
  });
  it('defaults to the median centre', () => {
    expect(leveneTest(groups).statistic).toBe(r.statistic);
  });
});

describe('leveneTest cross-check against scipy.stats.levene (generated fixture)', () => {
  type Case = { groups: number[][]; center: 'mean' | 'median'; statistic: number; p: number };
  const { cases } = loadFixture<{ cases: Case[] }>('generated/levene-scipy.json');
  it.each(cases.map((c, i) => [i, c.center, c] as const))('case %i (%s)', (_, center, c) => {
    const r = leveneTest(c.groups, { center });
    expectDigits('scipy W', r.statistic, c.statistic, 11);
    expectRel('scipy p', r.p, c.p, 1e-7);
  });
});

describe('leveneTest properties', () => {
  it('invariant to shifting a group and to a common positive scale', () => {
    fc.assert(
      fc.property(
        fc.array(fc.array(fc.integer({ min: -5000, max: 5000 }).map((v) => v / 100), { minLength: 3, maxLength: 10 }), { minLength: 2, maxLength: 4 }),
        fc.integer({ min: -1000, max: 1000 }),
        fc.constantFrom(0.5, 2, 10),
        (groups, shift, scale) => {
          let base: ReturnType<typeof leveneTest>;
          try {
            base = leveneTest(groups, { center: 'mean' });
          } catch {
            return; // degenerate draw (no spread): covered by the bad-input test
          }
          const moved = leveneTest(groups.map((g, i) => g.map((v) => scale * (v + (i === 0 ? shift : 0)))), { center: 'mean' });
          expect(Math.abs(moved.statistic - base.statistic)).toBeLessThanOrEqual(1e-8 * Math.max(1, base.statistic));
        },
      ),
      { numRuns: 50 },
    );
  });
});

describe('leveneTest bad input', () => {
  it('names the argument and the problem', () => {
    expect(() => leveneTest('x' as never)).toThrow(TypeError);
    expect(() => leveneTest([[1, 2, 3]])).toThrow(/at least 2 groups/);
    expect(() => leveneTest([[1, 2, 3], [4]])).toThrow(/groups\[1\] has 1 value/);
    expect(() => leveneTest([[1, 2, 3], []])).toThrow(/groups\[1\] has 0 value/);
    expect(() => leveneTest([[1, 2, 3], [4, Number.NaN]])).toThrow(/groups\[1\]\[1\] must be finite/);
    expect(() => leveneTest([[1, 2, 3], [4, 5]], { center: 'trimmed' as never })).toThrow(/options.center must be 'mean' or 'median'/);
    expect(() => leveneTest([[1, 2, 3], [4, 5]], { centre: 'mean' } as never)).toThrow(/unknown option 'centre'/);
    expect(() => leveneTest([[1, 2], [4, 6]], { center: 'median' })).toThrow(/do not vary within any group.*2 values/);
    expect(() => leveneTest([[1, 1, 1], [4, 4, 4]], { center: 'mean' })).toThrow(/do not vary/);
  });
});

describe('leveneTest: a large common offset', () => {
  // Reference: scipy 1.17.1 stats.levene on x - 1e9 (the subtraction is exact for these doubles,
  // Sterbenz), centre mean 0.3768937490762951, median 0.3655189380748321. Without the shift the
  // rounded group means left W 5.8e-8 relative off (found by the independent scipy cross-check).
  const offsetT = [999999999.6348306, 1000000000.326041, 1000000000.097701, 999999997.8596439, 999999997.5947006, 1000000000.7946707, 1000000000.5231246, 999999998.1150738, 999999999.2232553];
const offsetC = [1000000000.2888099, 999999999.319784, 1000000003.1020355, 1000000000.5117075, 1000000000.9522128, 1000000000.3644332, 999999999.7238802];
  it.each([
    ['mean', 0.3768937490762951],
    ['median', 0.3655189380748321],
  ] as const)('centre %s to 1e-12 relative for values near 1e9', (center, w) => {
    expect(Math.abs(leveneTest([offsetT, offsetC], { center }).statistic - w) / w).toBeLessThan(1e-12);
  });
});
