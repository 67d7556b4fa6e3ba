import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { createRng } from '../../createRng/createRng.js';
import { minimizationAssign, type MinimizationInput } from '../minimizationAssign.js';

const base: MinimizationInput = {
  arms: ['A', 'B'],
  factors: ['sex', 'ageBand', 'site'],
  levels: { sex: 'F', ageBand: '40-59', site: 'S2' },
  counts: {
    sex: { F: { A: 5, B: 3 } },
    ageBand: { '40-59': { A: 2, B: 4 } },
    site: { S2: { A: 3, B: 2 } },
  },
  probability: 0.75,
  imbalance: 'range',
  random: createRng('minimization-test'),
};

describe('minimizationAssign: Pocock & Simon (1975) imbalance scores', () => {
  it('computes the hand-worked range scores and prefers the arm that reduces imbalance', () => {
    // Joining A: |6-3| + |3-4| + |4-2| = 3 + 1 + 2 = 6; joining B: |5-4| + |2-5| + |3-3| = 1 + 3 + 0 = 4.
    const d = minimizationAssign(base);
    expect(d.scores).toEqual({ A: 6, B: 4 });
    expect(d.factorImbalance.B).toEqual({ sex: 1, ageBand: 3, site: 0 });
    expect(d.preferred).toBe('B');
    expect(d.tiedArms).toEqual(['B']);
    expect(d.draws.tieBreak).toBeNull();
    expect(d.probabilities).toEqual({ A: 0.25, B: 0.75 });
    expect(d.assigned).toBe(d.draws.assignment < 0.75 ? 'B' : 'A');
  });
  it('applies factor weights', () => {
    // weight 3 on ageBand: A = 3 + 3 + 2 = 8, B = 1 + 9 + 0 = 10 -> A preferred.
    const d = minimizationAssign({ ...base, weights: { ageBand: 3 } });
    expect(d.scores).toEqual({ A: 8, B: 10 });
    expect(d.preferred).toBe('A');
  });
  it('uses the sample variance of the counts with imbalance: variance', () => {
    // Three arms, one factor, counts 2, 1, 1. Joining A: (3,1,1) variance 4/3; joining B: (2,2,1) variance 1/3.
    const d = minimizationAssign({
      arms: ['A', 'B', 'C'],
      factors: ['sex'],
      levels: { sex: 'M' },
      counts: { sex: { M: { A: 2, B: 1, C: 1 } } },
      probability: 0.6,
      imbalance: 'variance',
      random: () => 0.5,
    });
    expect(d.scores.A).toBeCloseTo(4 / 3, 14);
    expect(d.scores.B).toBeCloseTo(1 / 3, 14);
    expect(d.tiedArms).toEqual(['B', 'C']);
    expect(d.draws.tieBreak).toBe(0.5);
    expect(d.preferred).toBe('C'); // floor(0.5 * 2) = 1 -> second tied arm
    expect(d.probabilities).toEqual({ A: 0.2, B: 0.2, C: 0.6 });
  });
  it('divides counts by the ratio for unequal allocation (2:1 counts 4:2 are balanced)', () => {
    const d = minimizationAssign({
      arms: ['A', 'B'],
      ratio: [2, 1],
      factors: ['sex'],
      levels: { sex: 'F' },
      counts: { sex: { F: { A: 4, B: 2 } } },
      probability: 0.8,
      imbalance: 'range',
      random: () => 0.1,
    });
    // Joining A: 5/2 - 2 = 0.5; joining B: 3 - 2 = 1 -> A preferred.
    expect(d.scores).toEqual({ A: 0.5, B: 1 });
    expect(d.preferred).toBe('A');
  });
  it('maps the assignment draw: preferred below p, others share [p, 1) in arm order', () => {
    const three = (u: number) =>
      minimizationAssign({ ...base, arms: ['A', 'B', 'C'], counts: { sex: { F: { A: 1 } } }, factors: ['sex'], levels: { sex: 'F' }, probability: 0.7, random: () => u });
    // Joining A: range 2 - 0 = 2; B: 1 - 0 = 1; C: 1 -> tie B, C; tie draw u picks by floor(u * 2).
    expect(three(0.2).preferred).toBe('B');
    expect(three(0.2).assigned).toBe('B');
    expect(three(0.8).preferred).toBe('C');
    // Same u for both draws here: preferred C; u = 0.8 >= 0.7, the others are [A, B] and
    // floor((0.8 - 0.7) / 0.3 * 2) = 0 -> A.
    expect(three(0.8).assigned).toBe('A');
    expect(three(0.95).assigned).toBe('B'); // preferred C (tie draw 0.95), floor(0.25 / 0.3 * 2) = 1 -> B
  });
});

describe('minimizationAssign: never deterministic when probability < 1', () => {
  const countsArb = fc.record({
    a: fc.nat({ max: 30 }),
    b: fc.nat({ max: 30 }),
    c: fc.nat({ max: 30 }),
  });
  it('gives every arm a positive probability and a reachable draw, whatever the counts (property)', () => {
    fc.assert(
      fc.property(countsArb, countsArb, fc.double({ min: 0.34, max: 0.99, noNaN: true }), fc.constantFrom<'range' | 'variance'>('range', 'variance'), (c1, c2, p, imbalance) => {
        const input = (draws: number[]): MinimizationInput => ({
          arms: ['A', 'B', 'C'],
          factors: ['f1', 'f2'],
          levels: { f1: 'x', f2: 'y' },
          counts: { f1: { x: { A: c1.a, B: c1.b, C: c1.c } }, f2: { y: { A: c2.a, B: c2.b, C: c2.c } } },
          probability: p,
          imbalance,
          random: () => draws.shift() ?? 0.5,
        });
        // A grid over both draws (tie-break, assignment), plus a fine single-draw grid for the
        // case without a tie, where only one draw is consumed.
        const seen = new Set<string>();
        for (let j = 0; j < 400; j++) seen.add(minimizationAssign(input([(j + 0.5) / 400])).assigned);
        // Each non-preferred arm's interval has width (1 - p) / 2 >= 0.005, so a 400-point grid hits it.
        for (let i = 0; i < 6; i++) {
          for (let j = 0; j < 400; j++) seen.add(minimizationAssign(input([(i + 0.5) / 6, (j + 0.5) / 400])).assigned);
        }
        expect([...seen].sort()).toEqual(['A', 'B', 'C']);
        const d = minimizationAssign(input([0.3, 0.3]));
        for (const a of ['A', 'B', 'C']) expect(d.probabilities[a]).toBeGreaterThan(0);
      }),
    );
  });
  it('with a seeded generator, each arm appears and the preferred share is close to p (p = 3/4, Pocock 1979)', () => {
    const rng = createRng('frequency-check');
    const tally = { preferred: 0, other: 0 };
    const seen = new Set<string>();
    const N = 4000;
    for (let i = 0; i < N; i++) {
      const d = minimizationAssign({ ...base, random: rng });
      seen.add(d.assigned);
      if (d.assigned === d.preferred) tally.preferred++;
      else tally.other++;
    }
    expect(seen).toEqual(new Set(['A', 'B']));
    const se = Math.sqrt((0.75 * 0.25) / N);
    expect(Math.abs(tally.preferred / N - 0.75)).toBeLessThan(5 * se);
  });
  it('keeps arms balanced when run sequentially (compared with the margins a simple coin would allow)', () => {
    const rng = createRng('sequential');
    const levelsOf = (i: number) => ({ sex: i % 3 === 0 ? 'M' : 'F', band: i % 5 < 2 ? 'young' : 'old' });
    const counts: MinimizationInput['counts'] = { sex: {}, band: {} };
    const total: Record<string, number> = { A: 0, B: 0 };
    for (let i = 0; i < 200; i++) {
      const levels = levelsOf(i);
      const d = minimizationAssign({ arms: ['A', 'B'], factors: ['sex', 'band'], levels, counts, probability: 0.8, imbalance: 'range', random: rng });
      for (const f of ['sex', 'band'] as const) {
        const lv = levels[f];
        const byLevel = (counts[f] as Record<string, Record<string, number>>);
        byLevel[lv] ??= { A: 0, B: 0 };
        (byLevel[lv] as Record<string, number>)[d.assigned] = ((byLevel[lv] as Record<string, number>)[d.assigned] ?? 0) + 1;
      }
      total[d.assigned] = (total[d.assigned] as number) + 1;
    }
    expect(Math.abs((total.A as number) - (total.B as number))).toBeLessThanOrEqual(10);
    expect(total.A as number).toBeGreaterThan(0);
  });
});

describe('minimizationAssign: bad input', () => {
  it.each([
    ['probability 1 (deterministic)', { probability: 1 }, RangeError, /probability must be less than 1/],
    ['probability at 1/arms', { probability: 0.5 }, RangeError, /probability must be greater than 0.5/],
    ['unknown imbalance', { imbalance: 'gini' }, RangeError, /imbalance must be one of 'range', 'variance'/],
    ['no factors', { factors: [] }, RangeError, /factors must be a non-empty array/],
    ['missing level', { levels: { sex: 'F', ageBand: '40-59' } }, RangeError, /levels.site is missing/],
    ['negative count', { counts: { sex: { F: { A: -1 } } } }, RangeError, /counts.sex.F.A must be at least 0/],
    ['fractional count', { counts: { sex: { F: { A: 1.5 } } } }, RangeError, /counts.sex.F.A must be an integer/],
    ['weight for an unknown factor', { weights: { height: 2 } }, RangeError, /weights.height is not one of the factors/],
    ['zero weight', { weights: { sex: 0 } }, RangeError, /weights.sex must be greater than 0/],
    ['random not a generator', { random: 0.5 }, TypeError, /random must be a createRng\(\) generator or a function/],
    ['random out of range', { random: () => 1 }, RangeError, /random returned 1 for the assignment draw/],
    ['one arm', { arms: ['A'] }, RangeError, /arms needs at least 2 arms/],
    ['ratio of the wrong length', { ratio: [1, 2, 3] }, RangeError, /ratio has 3 entries but there are 2 arms/],
  ])('rejects %s', (_l, patch, type, message) => {
    const call = () => minimizationAssign({ ...base, ...(patch as object) } as MinimizationInput);
    expect(call).toThrow(type);
    expect(call).toThrow(message);
  });
});

describe('minimizationAssign: options the call may leave out', () => {
  // Three arms (range measure, Pocock & Simon 1975). sex F: counts A 2, B 1, C 1, so joining A
  // gives range 2, joining B or C range 1; band 2: counts all 0, range 1 whichever arm is joined.
  // Totals A 3, B 2, C 2: B and C tie (hand computation).
  const call = {
    factors: ['sex', 'band'],
    levels: { sex: 'F', band: 2 },
    counts: { sex: { F: { A: 2, B: 1, C: 1 } }, band: { 2: { A: 0, B: 0, C: 0 } } },
    probability: 0.7,
    imbalance: 'range' as const,
  };
  const draws = () => {
    const u = [0.1, 0.2];
    return () => u.shift() as number;
  };
  it('reads the arms from counts, in order of first appearance, when arms is omitted', () => {
    const inferred = minimizationAssign({ ...call, random: draws() });
    const explicit = minimizationAssign({ ...call, arms: ['A', 'B', 'C'], random: draws() });
    expect(inferred).toEqual(explicit);
    expect(inferred.scores).toEqual({ A: 3, B: 2, C: 2 });
    expect(inferred.tiedArms).toEqual(['B', 'C']);
  });
  it('takes a numeric level as its string key, weights as an array in factors order, and range by default', () => {
    const { imbalance: _omit, ...noMeasure } = call;
    const a = minimizationAssign({ ...noMeasure, arms: ['A', 'B', 'C'], weights: [2, 1], random: draws() });
    const b = minimizationAssign({ ...call, arms: ['A', 'B', 'C'], levels: { sex: 'F', band: '2' }, weights: { sex: 2, band: 1 }, random: draws() });
    expect(a).toEqual(b);
    expect(a.imbalance).toBe('range');
    expect(a.scores).toEqual({ A: 5, B: 3, C: 3 }); // 2 x sex + 1 x band
  });
  it.each([
    ['counts naming one arm, without arms', { counts: { sex: { F: { A: 1 } } } }, RangeError, /arms was not given and counts name 1 arm/],
    ['weights array of the wrong length', { arms: ['A', 'B', 'C'], weights: [1] }, RangeError, /weights has 1 entries but there are 2 factors/],
  ])('rejects %s', (_l, patch, type, message) => {
    const f = () => minimizationAssign({ ...call, random: draws(), ...(patch as object) } as MinimizationInput);
    expect(f).toThrow(type);
    expect(f).toThrow(message);
  });
});
