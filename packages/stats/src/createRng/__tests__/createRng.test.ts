import seedrandom from 'seedrandom';
import { describe, expect, it } from 'vitest';
import { createRng } from '../createRng.js';

describe('createRng', () => {
  it('reproduces the seedrandom default (ARC4) sequence for the same seed', () => {
    const ours = createRng('counterpoise-demo-seed');
    const lib = seedrandom('counterpoise-demo-seed');
    for (let i = 0; i < 100; i++) expect(ours.next()).toBe(lib());
  });
  it('gives different sequences for different seeds and identical ones for the same seed', () => {
    const a = Array.from({ length: 5 }, ((r) => () => r.next())(createRng('s1')));
    const b = Array.from({ length: 5 }, ((r) => () => r.next())(createRng('s1')));
    const c = Array.from({ length: 5 }, ((r) => () => r.next())(createRng('s2')));
    expect(b).toEqual(a);
    expect(c).not.toEqual(a);
  });
  it('resumes exactly from a persisted state (JSON round trip)', () => {
    const r = createRng('resume');
    r.next();
    r.next();
    const saved = JSON.parse(JSON.stringify(r.state()));
    const expected = [r.next(), r.next(), r.next()];
    const resumed = createRng('resume', saved);
    expect([resumed.next(), resumed.next(), resumed.next()]).toEqual(expected);
  });
  it('int(n) stays in range and hits every value', () => {
    const r = createRng('ints');
    const seen = new Set<number>();
    for (let i = 0; i < 500; i++) {
      const v = r.int(6);
      expect(Number.isInteger(v) && v >= 0 && v < 6).toBe(true);
      seen.add(v);
    }
    expect(seen.size).toBe(6);
  });
  it.each([
    ['non-string seed', () => createRng(42 as unknown as string), TypeError, /seed must be a string/],
    ['empty seed', () => createRng(''), RangeError, /seed must not be empty/],
    ['bad state', () => createRng('x', { i: 0, j: 0, S: [1, 2] }), RangeError, /state must be a state\(\) object/],
    ['int(0)', () => createRng('x').int(0), RangeError, /int\(n\) needs a positive integer n, got 0/],
  ])('rejects %s', (_l, call, type, message) => {
    expect(call).toThrow(type);
    expect(call).toThrow(message);
  });
});
