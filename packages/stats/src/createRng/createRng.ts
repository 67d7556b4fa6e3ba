import seedrandom from 'seedrandom';
import { ALLOCATION_ALGORITHM_VERSION } from '../allocationAlgorithmVersion/allocationAlgorithmVersion.js';

export type RngState = { i: number; j: number; S: number[] };

export type Rng = {
  /** Uniform double in [0, 1). */
  next(): number;
  /** Uniform integer in [0, n). */
  int(n: number): number;
  /** Generator state, to persist and resume with `createRng(seed, state)`. */
  state(): RngState;
  readonly seed: string;
  readonly algorithm: 'seedrandom-arc4';
  readonly version: string;
};

/**
 * Seeded, reproducible pseudo-random generator for allocation lists: the default generator of
 * the `seedrandom` package (v3, ARC4-based, string seed). The same seed always gives the same
 * sequence on every platform, so a stored seed and algorithm version reproduce a list.
 * Not for secrets: allocation concealment comes from keeping the seed server-side.
 *
 * `int(n)` is floor(next() * n); with 52 random bits per double the bias is below n / 2^52.
 *
 * @throws {TypeError} seed is not a string.
 * @throws {RangeError} seed is empty; `int` with n not a positive integer; a malformed state.
 * @example
 * const rng = createRng('study-042/site-3/stratum-A');
 * rng.next(); // the same number every run
 */
export function createRng(seed: string, state?: RngState): Rng {
  const fn = 'createRng';
  if (typeof seed !== 'string') throw new TypeError(`${fn}: seed must be a string, got ${typeof seed}`);
  if (seed.length === 0) throw new RangeError(`${fn}: seed must not be empty`);
  if (state !== undefined) {
    const ok =
      state !== null &&
      typeof state === 'object' &&
      Number.isInteger(state.i) &&
      Number.isInteger(state.j) &&
      Array.isArray(state.S) &&
      state.S.length === 256 &&
      state.S.every((v) => Number.isInteger(v) && v >= 0 && v < 256);
    if (!ok) throw new RangeError(`${fn}: state must be a state() object from a previous generator`);
  }
  const prng = seedrandom(seed, { state: state === undefined ? true : { i: state.i, j: state.j, S: [...state.S] } });
  return {
    next: () => prng(),
    int(n: number): number {
      if (!Number.isInteger(n) || n < 1) throw new RangeError(`${fn}: int(n) needs a positive integer n, got ${n}`);
      return Math.floor(prng() * n);
    },
    state: () => {
      const s = prng.state();
      return { i: s.i, j: s.j, S: [...s.S] };
    },
    seed,
    algorithm: 'seedrandom-arc4',
    version: ALLOCATION_ALGORITHM_VERSION.rng,
  };
}
