import { describe, expect, it } from 'vitest';
import { oneWayAnova } from '../oneWayAnova.js';
import { expectDigits, expectRel, loadFixture, significantDigits } from '../../referenceTestSupport/referenceTestSupport.js';

type NistAnova = {
  id: string;
  nist_difficulty: 'Lower' | 'Average' | 'Higher';
  data: Array<{ group: string; values: string[] }>;
  certified: {
    between_groups: { df: number; sum_of_squares: string; mean_square: string };
    within_groups: { df: number; sum_of_squares: string; mean_square: string };
    f_statistic: string;
    r_squared: string;
    residual_sd: string;
  };
};

/**
 * Decimal strings -> doubles with the common leading part removed *in exact decimal
 * arithmetic* (BigInt), so that the doubles hold the NIST data exactly up to 1 ulp of the
 * small remainders. One-way ANOVA is invariant to a common shift, so the certified values
 * apply unchanged. Without this, "1000000000000.4" is stored as 1000000000000.400024... and no
 * double-precision program can reproduce SmLs07-09 beyond about 4 digits (see the second
 * block of checks below).
 */
function exactShiftedGroups(data: NistAnova['data']): number[][] {
  const decimals = Math.max(...data.flatMap((g) => g.values.map((v) => (v.split('.')[1] ?? '').length)));
  const scale = 10n ** BigInt(decimals);
  const toScaled = (v: string): bigint => {
    const [int, frac = ''] = v.split('.');
    const sign = (int as string).startsWith('-') ? -1n : 1n;
    const whole = BigInt((int as string).replace('-', '')) * scale + BigInt(frac.padEnd(decimals, '0') || '0');
    return sign * whole;
  };
  const scaled = data.map((g) => g.values.map(toScaled));
  const min = scaled.flat().reduce((a, b) => (b < a ? b : a));
  return scaled.map((g) => g.map((v) => Number(v - min) / Number(scale)));
}

const nistFiles: Array<[string, 'Lower' | 'Average' | 'Higher']> = [
  ['SiRstv', 'Lower'],
  ['SmLs01', 'Lower'],
  ['SmLs02', 'Lower'],
  ['SmLs03', 'Lower'],
  ['AtmWtAg', 'Average'],
  ['SmLs04', 'Average'],
  ['SmLs05', 'Average'],
  ['SmLs06', 'Average'],
  ['SmLs07', 'Higher'],
  ['SmLs08', 'Higher'],
  ['SmLs09', 'Higher'],
];

function checkCertified(id: string, result: ReturnType<typeof oneWayAnova>, c: NistAnova['certified'], digits: number): number {
  expect(result.between.df, `NIST ${id} between df`).toBe(c.between_groups.df);
  expect(result.within.df, `NIST ${id} within df`).toBe(c.within_groups.df);
  return Math.min(
    expectDigits(`NIST ${id} SS between`, result.between.ss, c.between_groups.sum_of_squares, digits),
    expectDigits(`NIST ${id} MS between`, result.between.ms, c.between_groups.mean_square, digits),
    expectDigits(`NIST ${id} SS within`, result.within.ss, c.within_groups.sum_of_squares, digits),
    expectDigits(`NIST ${id} MS within`, result.within.ms, c.within_groups.mean_square, digits),
    expectDigits(`NIST ${id} F`, result.between.f, c.f_statistic, digits),
    expectDigits(`NIST ${id} R^2`, result.rSquared, c.r_squared, digits),
    expectDigits(`NIST ${id} residual SD`, result.residualSD, c.residual_sd, digits),
  );
}

describe('oneWayAnova against NIST StRD ANOVA (certified, 15 digits; confidence: exact)', () => {
  it.each(nistFiles)('%s (%s difficulty), data entered exactly: >= 9 digits on every certified value', (id) => {
    const f = loadFixture<NistAnova>(`reference/nist-anova/${id}.json`);
    checkCertified(id, oneWayAnova(exactShiftedGroups(f.data)), f.certified, 9);
  });

  type DoubleExact = { cases: Record<string, { between_ss: number; within_ss: number; f: number }> };
  const exactOnDoubles = loadFixture<DoubleExact>('generated/nist-anova-double-exact.json');

  it.each(nistFiles)('%s (%s), values parsed straight to doubles: agrees with exact arithmetic on those doubles', (id, difficulty) => {
    // Reference: exact rational ANOVA of the same doubles (Python fractions, generated fixture;
    // derived, not published). This isolates the algorithm's own rounding error.
    const f = loadFixture<NistAnova>(`reference/nist-anova/${id}.json`);
    const result = oneWayAnova(f.data.map((g) => g.values.map(Number)));
    const ref = exactOnDoubles.cases[id];
    if (!ref) throw new Error(`missing exact-on-doubles case ${id}`);
    expectDigits(`${id} SS between vs exact-on-doubles`, result.between.ss, ref.between_ss, 12);
    expectDigits(`${id} SS within vs exact-on-doubles`, result.within.ss, ref.within_ss, 12);
    expectDigits(`${id} F vs exact-on-doubles`, result.between.f, ref.f, 12);
    // Against NIST's certified values the inputs' own representation error sets the limit:
    // >= 9 digits for lower/average, and for SmLs07-09 (13 constant digits) the doubles
    // themselves differ from the decimal data in the 4th digit of the deviations.
    const floor = difficulty === 'Higher' ? 3.5 : 9;
    expectDigits(`NIST ${id} SS between (double input)`, result.between.ss, f.certified.between_groups.sum_of_squares, floor);
    expectDigits(`NIST ${id} SS within (double input)`, result.within.ss, f.certified.within_groups.sum_of_squares, floor);
  });

  it('a naive one-pass formula would fail SmLs07 (why the two-pass, shifted algorithm is needed)', () => {
    const f = loadFixture<NistAnova>('reference/nist-anova/SmLs07.json');
    const values = f.data.flatMap((g) => g.values.map(Number));
    let s = 0;
    let s2 = 0;
    for (const v of values) {
      s += v;
      s2 += v * v;
    }
    const naiveTotal = s2 - (s * s) / values.length;
    const result = oneWayAnova(f.data.map((g) => g.values.map(Number)));
    expect(significantDigits(naiveTotal, result.total.ss)).toBeLessThan(1);
    expectDigits('SmLs07 total SS = between + within', result.total.ss, result.between.ss + result.within.ss, 12);
  });
});

describe('oneWayAnova against the NIST/SEMATECH e-Handbook §7.4.3.3 example', () => {
  type Handbook = { data: Array<{ values: string[] }>; published: Record<string, unknown>; derived_exact_not_published: Record<string, string> };
  const h = loadFixture<Handbook>('reference/nist-handbook/one-way-anova-7.4.3.3.json');
  const result = oneWayAnova(h.data.map((g) => g.values.map(Number)));

  it('published SS(treatments), SS(error), SS(total), MS(error), F (confirmed, secondary copies; printed to 3-5 digits)', () => {
    expectRel('e-Handbook SS treatments 27.897', result.between.ss, '27.897', 0.0005 / 27.897);
    expectRel('e-Handbook SS error 17.452', result.within.ss, '17.452', 0.0005 / 17.452);
    expectRel('e-Handbook SS total 45.349', result.total.ss, '45.349', 0.0005 / 45.349);
    expectRel('e-Handbook MS error 1.454', result.within.ms, '1.454', 0.0005 / 1.454);
    expectRel('e-Handbook F 9.59', result.between.f, '9.59', 0.005 / 9.59);
    expect(result.between.df).toBe(2);
    expect(result.within.df).toBe(12);
  });

  it('MS(treatments) 13.949 (from memory, unconfirmed) and exact values (derived, not external evidence)', () => {
    expectRel('e-Handbook MS treatments 13.949 (memory)', result.between.ms, '13.949', 0.0005 / 13.949);
    expectDigits('derived exact F', result.between.f, h.derived_exact_not_published.f_statistic as string, 13);
    expectDigits('derived exact SS treatments 20923/750', result.between.ss, 20923 / 750, 13);
  });
});

describe('oneWayAnova cross-check against scipy.stats.f_oneway (generated fixture)', () => {
  type Cases = { cases: Array<{ groups: number[][]; f: number; p: number }> };
  const { cases } = loadFixture<Cases>('generated/one-way-anova-scipy.json');
  it.each(cases.map((c, i) => [i, c] as const))('case %i: F to 1e-10, p to 1e-7 relative', (_, c) => {
    const r = oneWayAnova(c.groups);
    expectRel('scipy F', r.between.f, c.f, 1e-10);
    expectRel('scipy p', r.between.p, c.p, 1e-7);
    expectDigits('eta^2 = SSB/SST', r.etaSquared, r.between.ss / (r.between.ss + r.within.ss), 12);
  });
});

describe('oneWayAnova bad input', () => {
  it('rejects non-arrays, too few groups, tiny groups, non-finite values and zero variation', () => {
    expect(() => oneWayAnova('x' as unknown as number[][])).toThrow(TypeError);
    expect(() => oneWayAnova([[1, 2, 3]])).toThrow(/groups needs at least 2 groups/);
    expect(() => oneWayAnova([[1, 2], []])).toThrow(/groups\[1\] has 0 value/);
    expect(() => oneWayAnova([[1, 2], [3]])).toThrow(/groups\[1\] has 1 value/);
    expect(() => oneWayAnova([[1, 2], [3, Number.NaN]])).toThrow(/groups\[1\]\[1\] must be finite/);
    expect(() => oneWayAnova([[1, 2], [3, Infinity]])).toThrow(RangeError);
    expect(() => oneWayAnova([[1, 2], [3, '4' as unknown as number]])).toThrow(TypeError);
    expect(() => oneWayAnova([[1, 1], [2, 2]])).toThrow(/zero within-group variation/);
    expect(() => oneWayAnova([[1, 2], null as unknown as number[]])).toThrow(/groups\[1\] must be an array/);
  });
});
