import { describe, expect, it } from 'vitest';
import { expectClose, loadBalanceFixture } from '../../balanceTestSupport/balanceTestSupport.js';
import { smdChanceBand } from '../smdChanceBand.js';

type Case = { nTreated: number; nControl: number; level: number; se: number; z: number; halfWidth: number };
const fixture = loadBalanceFixture<{ cases: Case[] }>('chance-band.json');

describe('smdChanceBand: cross-check against scipy.stats.norm.ppf (fixture chance-band.json)', () => {
  for (const c of fixture.cases) {
    it(`matches scipy for nT=${c.nTreated}, nC=${c.nControl}, level=${c.level}`, () => {
      const b = smdChanceBand(c.nTreated, c.nControl, c.level);
      const ctx = { case: `${c.nTreated}/${c.nControl}/${c.level}`, input: c };
      expectClose(b.se, c.se, fixture.tolerance, { ...ctx, quantity: 'se' });
      expectClose(b.z, c.z, fixture.tolerance, { ...ctx, quantity: 'z' });
      expectClose(b.upper, c.halfWidth, fixture.tolerance, { ...ctx, quantity: 'upper' });
      expect(b.lower).toBe(-b.upper);
    });
  }
  it('defaults to the 95% level (z = 1.959964, standard normal table)', () => {
    const b = smdChanceBand(50, 50);
    expect(b.level).toBe(0.95);
    expect(b.se).toBeCloseTo(0.2, 15);
    expect(b.z).toBeCloseTo(1.959964, 6);
    expect(b.approximation).toMatch(/large-sample normal/);
  });
});

describe('smdChanceBand: bad input', () => {
  it.each([
    ['zero nTreated', () => smdChanceBand(0, 10), RangeError, /nTreated must be at least 1, got 0/],
    ['fractional nControl', () => smdChanceBand(10, 2.5), RangeError, /nControl must be an integer/],
    ['NaN nTreated', () => smdChanceBand(Number.NaN, 10), RangeError, /nTreated must be finite/],
    ['string nControl', () => smdChanceBand(10, '10' as unknown as number), TypeError, /nControl must be a number/],
    ['level 1', () => smdChanceBand(10, 10, 1), RangeError, /level must be less than 1/],
    ['level 0', () => smdChanceBand(10, 10, 0), RangeError, /level must be greater than 0/],
  ])('rejects %s', (_label, call, type, message) => {
    expect(call).toThrow(type);
    expect(call).toThrow(message);
  });
});
