import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { expectClose, loadBalanceFixture } from '../../balanceTestSupport/balanceTestSupport.js';
import { standardizedMeanDifference } from '../../standardizedMeanDifference/standardizedMeanDifference.js';
import { categoricalSmd } from '../categoricalSmd.js';

type Case = { name: string; treated: string[]; control: string[]; weightsTreated?: number[]; weightsControl?: number[]; smd: number };
const fixture = loadBalanceFixture<{ cases: Case[] }>('categorical-smd.json');

describe('categoricalSmd: cross-check against numpy (fixture categorical-smd.json)', () => {
  // Source: formula derived in the doc block (multinomial covariance diag(p) - pp'), solved by numpy.linalg.solve.
  for (const c of fixture.cases) {
    it(`matches numpy for ${c.name}`, () => {
      const w = c.weightsTreated ? { treated: c.weightsTreated, control: c.weightsControl } : undefined;
      expectClose(categoricalSmd(c.treated, c.control, w), c.smd, fixture.tolerance, { case: c.name, quantity: 'smd', input: c });
    });
  }
});

describe('categoricalSmd: reduction and invariance', () => {
  const twoLevels = fc.tuple(
    fc.array(fc.constantFrom(0, 1), { minLength: 1, maxLength: 40 }),
    fc.array(fc.constantFrom(0, 1), { minLength: 1, maxLength: 40 }),
  ).filter(([t, c]) => new Set([...t, ...c]).size === 2 && !(allSame(t) && allSame(c)));

  it('with two levels equals |binary SMD| (Austin 2009), unweighted and weighted', () => {
    fc.assert(
      fc.property(twoLevels, fc.array(fc.double({ min: 0.1, max: 5, noNaN: true }), { minLength: 80, maxLength: 80 }), ([t, c], w) => {
        const bin = standardizedMeanDifference(t, c, { kind: 'binary' });
        expect(categoricalSmd(t, c)).toBeCloseTo(Math.abs(bin), 12);
        const wt = w.slice(0, t.length);
        const wc = w.slice(40, 40 + c.length);
        const binW = standardizedMeanDifference(t, c, { kind: 'binary', weightsTreated: wt, weightsControl: wc });
        expect(categoricalSmd(t, c, { treated: wt, control: wc })).toBeCloseTo(Math.abs(binW), 12);
      }),
    );
  });

  it('gives the hand-computed value for a 3-level example', () => {
    // pT(b, c) = (0.25, 0.25), pC = (0.5, 0.25); S = [[0.21875, -0.09375], [-0.09375, 0.1875]];
    // d^2 = 0.0625 * 0.1875 / det(S) with det(S) = 0.0322265625.
    expect(categoricalSmd(['a', 'b', 'c', 'a'], ['b', 'b', 'c', 'a'])).toBeCloseTo(Math.sqrt((0.0625 * 0.1875) / 0.0322265625), 14);
  });

  it('does not depend on which level is left out (renaming levels changes the sort order)', () => {
    const t = ['x', 'y', 'z', 'z', 'x', 'y', 'y', 'w'];
    const c = ['w', 'w', 'z', 'y', 'x', 'x', 'z', 'w'];
    const base = categoricalSmd(t, c);
    const perms: Record<string, string>[] = [
      { w: 'd', x: 'c', y: 'b', z: 'a' },
      { w: 'b', x: 'd', y: 'a', z: 'c' },
    ];
    for (const p of perms) {
      expect(categoricalSmd(t.map((l) => p[l] as string), c.map((l) => p[l] as string))).toBeCloseTo(base, 12);
    }
  });

  it('is symmetric in the arms and independent of row order', () => {
    fc.assert(
      fc.property(
        fc.array(fc.constantFrom('a', 'b', 'c', 'd'), { minLength: 8, maxLength: 50 }),
        fc.array(fc.constantFrom('a', 'b', 'c', 'd'), { minLength: 8, maxLength: 50 }),
        (t, c) => {
          let d: number;
          try {
            d = categoricalSmd(t, c);
          } catch (e) {
            expect(String(e)).toMatch(/singular|same level/);
            return;
          }
          expect(d).toBeGreaterThanOrEqual(0);
          expect(categoricalSmd(c, t)).toBeCloseTo(d, 10);
          expect(categoricalSmd([...t].reverse(), [...c].sort())).toBeCloseTo(d, 10);
        },
      ),
    );
  });

  it('accepts numeric level codes', () => {
    expect(categoricalSmd([1, 2, 3, 1], [2, 2, 3, 1])).toBeCloseTo(categoricalSmd(['1', '2', '3', '1'], ['2', '2', '3', '1']), 14);
  });

  it('the +p_k p_l (sign-error) form is not invariant to the left-out level; the derived form is', () => {
    // Why the sign matters: with a true covariance the distance cannot depend on which level is
    // dropped. With the copied "+" sign it does, so that form cannot be a Mahalanobis distance.
    const t = ['a', 'a', 'b', 'c', 'c', 'c', 'a', 'b'];
    const c = ['a', 'b', 'b', 'b', 'c', 'a', 'b', 'b'];
    const share = (xs: string[], l: string) => xs.filter((x) => x === l).length / xs.length;
    const twoByTwo = (kept: [string, string], sign: 1 | -1) => {
      const [k, l] = kept;
      const [tk, tl, ck, cl] = [share(t, k), share(t, l), share(c, k), share(c, l)];
      const a = (tk * (1 - tk) + ck * (1 - ck)) / 2;
      const d = (tl * (1 - tl) + cl * (1 - cl)) / 2;
      const b = (sign * (tk * tl + ck * cl)) / 2;
      const [x, y] = [tk - ck, tl - cl];
      return Math.sqrt((d * x * x - 2 * b * x * y + a * y * y) / (a * d - b * b));
    };
    const wrongDropA = twoByTwo(['b', 'c'], 1);
    const wrongDropC = twoByTwo(['a', 'b'], 1);
    expect(Math.abs(wrongDropA - wrongDropC)).toBeGreaterThan(0.01);
    expect(twoByTwo(['b', 'c'], -1)).toBeCloseTo(twoByTwo(['a', 'b'], -1), 12);
    expect(categoricalSmd(t, c)).toBeCloseTo(twoByTwo(['b', 'c'], -1), 12);
  });
});

describe('categoricalSmd: bad input', () => {
  it.each([
    ['empty treated', () => categoricalSmd([], ['a']), RangeError, /levelsTreated must not be empty/],
    ['not an array', () => categoricalSmd('abc' as unknown as string[], ['a']), TypeError, /levelsTreated must be an array/],
    ['null level', () => categoricalSmd(['a', null] as unknown as string[], ['a', 'b']), TypeError, /levelsTreated\[1\] must be a string or a number, got null/],
    ['NaN level', () => categoricalSmd([1, Number.NaN], [1, 2]), RangeError, /levelsTreated\[1\] must be a finite number or a string/],
    ['one level overall', () => categoricalSmd(['a', 'a'], ['a']), RangeError, /same level/],
    ['disjoint levels (singular S)', () => categoricalSmd(['a', 'b'], ['c', 'd']), RangeError, /singular/],
    ['weights of the wrong length', () => categoricalSmd(['a', 'b'], ['a', 'b'], { treated: [1] }), RangeError, /weights.treated has length 1 but levelsTreated has length 2/],
    ['negative weight', () => categoricalSmd(['a', 'b'], ['a', 'b'], { control: [1, -1] }), RangeError, /weights.control\[1\] must be non-negative/],
    ['weights not an object', () => categoricalSmd(['a', 'b'], ['a', 'b'], 1 as unknown as object), TypeError, /weights must be an object/],
  ])('rejects %s', (_label, call, type, message) => {
    expect(call).toThrow(type);
    expect(call).toThrow(message);
  });
});

function allSame(xs: number[]): boolean {
  return xs.every((x) => x === xs[0]);
}

describe('categoricalSmd: the weights argument', () => {
  it('takes a pair [treated, control] the same as { treated, control }, and rejects a single array', () => {
    const t = ['a', 'b', 'c', 'a'];
    const c = ['b', 'b', 'c', 'a'];
    const wT = [1, 2, 1, 0.5];
    const asObject = categoricalSmd(t, c, { treated: wT });
    expect(asObject).not.toBe(categoricalSmd(t, c)); // the weights matter here
    expect(categoricalSmd(t, c, [wT, undefined])).toBe(asObject);
    expect(() => categoricalSmd(t, c, wT as never)).toThrow(TypeError);
  });
});
