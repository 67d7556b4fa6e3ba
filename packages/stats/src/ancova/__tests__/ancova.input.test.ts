import { describe, expect, it } from 'vitest';
import { ancova } from '../ancova.js';
import { slopeHomogeneityTest } from '../../slopeHomogeneityTest/slopeHomogeneityTest.js';

const base = {
  outcome: [1, 2.5, 3, 4.2, 5, 6.1, 7, 8.4],
  group: ['a', 'a', 'a', 'a', 'b', 'b', 'b', 'b'],
  covariates: { x: [1, 3, 2, 5, 4, 6, 8, 7] },
};

describe('ancova bad input', () => {
  it('type errors name the argument', () => {
    expect(() => ancova(null as never)).toThrow(TypeError);
    expect(() => ancova({ ...base, outcome: 'abc' as never })).toThrow(/outcome must be an array/);
    expect(() => ancova({ ...base, group: 5 as never })).toThrow(/group must be an array/);
    expect(() => ancova({ ...base, group: [...base.group.slice(0, 7), null] as never })).toThrow(/group\[7\] must be a string or a number/);
    expect(() => ancova({ ...base, covariates: [1, 2] as never })).toThrow(/covariates must be an object/);
    expect(() => ancova({ ...base, outcome: [...base.outcome.slice(0, 7), '8'] as never })).toThrow(/outcome\[7\] must be a number/);
  });
  it('range errors: lengths, non-finite, groups, weights, unknown options', () => {
    expect(() => ancova({ ...base, outcome: [] })).toThrow(/outcome must not be empty/);
    expect(() => ancova({ ...base, outcome: base.outcome.slice(1) })).toThrow(/group has length 8 but outcome has length 7/);
    expect(() => ancova({ ...base, covariates: { x: [1, 2] } })).toThrow(/covariates.x has length 2 but outcome has length 8/);
    expect(() => ancova({ ...base, outcome: [...base.outcome.slice(0, 7), Number.NaN] })).toThrow(/outcome\[7\] must be finite/);
    expect(() => ancova({ ...base, covariates: { x: [...base.covariates.x.slice(0, 7), Infinity] } })).toThrow(/covariates.x\[7\] must be finite/);
    expect(() => ancova({ ...base, group: base.group.map(() => 'a') })).toThrow(/at least 2 distinct levels/);
    expect(() => ancova({ ...base, group: [...base.group.slice(0, 7), 'c'] })).toThrow(/level "c" has 1 observation/);
    expect(() => ancova({ ...base, group: [...base.group.slice(0, 7), Number.NaN] as never })).toThrow(/group\[7\] must be a finite number/);
    expect(() => ancova({ ...base, weights: [1, 1, 1, 1, 1, 1, 1, -1] })).toThrow(/weights\[7\] must be non-negative/);
    expect(() => ancova({ ...base, weights: [1, 1] })).toThrow(/weights has length 2/);
    expect(() => ancova({ ...base, weights: [0, 0, 0, 1, 1, 1, 1, 1] })).toThrow(/level "a" has 1 observation\(s\) with positive weight/);
    expect(() => ancova({ ...base, extra: true } as never)).toThrow(/unknown option 'extra'/);
    expect(() => ancova({ ...base, covariates: { group: base.covariates.x } })).toThrow(/must not use the name 'group'/);
  });
  it('zero variance, collinearity (named), exact fits and too few rows', () => {
    expect(() => ancova({ ...base, covariates: { x: base.covariates.x, age: base.outcome.map(() => 40) } })).toThrow(/covariates.age has zero variance/);
    expect(() => ancova({ ...base, covariates: { x: base.covariates.x, x2: base.covariates.x.map((v) => 3 * v - 2) } })).toThrow(
      /covariates.x2 is collinear with the group and covariates x/,
    );
    expect(() => ancova({ ...base, covariates: { site: [1, 1, 1, 1, 2, 2, 2, 2] } })).toThrow(/covariates.site is collinear with the group/);
    expect(() => ancova({ ...base, outcome: base.covariates.x.map((v, i) => 2 * v + (i < 4 ? 1 : 3)) })).toThrow(/fitted exactly/);
    expect(() => ancova({ outcome: [1, 2, 3, 4], group: ['a', 'a', 'b', 'b'], covariates: { x: [1, 2, 4, 3], z: [5, 1, 2, 2] } })).toThrow(
      /too few for 4 parameters/,
    );
  });
  it('valid input yields finite numbers everywhere (no silent NaN)', () => {
    const r = ancova({ ...base, weights: [1, 2, 1, 2, 1, 2, 1, 2] });
    const numbers = JSON.stringify(r).match(/null|NaN/g);
    expect(numbers).toBeNull();
    expect(r.weighted).toBe(true);
  });
});

describe('ancova: covariates omitted, numeric group labels', () => {
  // Reference: NIST/SEMATECH e-Handbook §7.4.3.3 one-way ANOVA example (SS between 27.897,
  // SS within 17.452, F 9.59); numeric labels 1, 2, 3 in order of first appearance.
  const y = [6.9, 5.4, 5.8, 4.6, 4.0, 8.3, 6.8, 7.8, 9.2, 6.5, 8.0, 10.5, 8.1, 6.9, 9.3];
  const g = [1, 1, 1, 1, 1, 2, 2, 2, 2, 2, 3, 3, 3, 3, 3];
  it('treats omitted covariates as none: the one-way ANOVA table with the term named group', () => {
    const r = ancova({ outcome: y, group: g });
    const term = r.terms.find((t) => t.term === 'group');
    expect(r.terms).toHaveLength(1);
    expect(term?.ss).toBeCloseTo(27.897, 3);
    expect(r.error.ss).toBeCloseTo(17.452, 3);
    expect(term?.f).toBeCloseTo(9.59, 2);
    expect(r.adjustedMeans.map((m) => m.group)).toEqual([1, 2, 3]);
    expect(r.unadjusted.between.f).toBeCloseTo(term?.f as number, 12);
  });
  it('slopeHomogeneityTest without covariates says one is needed', () => {
    expect(() => slopeHomogeneityTest({ outcome: y, group: g })).toThrow(/covariates must name at least one covariate/);
  });
});
