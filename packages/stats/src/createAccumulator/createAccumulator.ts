/**
 * Mergeable weighted running moments for one covariate in one arm (e.g. per site), so balance
 * can be updated one participant at a time and per-site figures merged into the overall one.
 *
 * Sufficient statistics: n (values added), W = sum w, W2 = sum w^2, mean_w and
 * M2 = sum w (x - mean_w)^2. Variance is the Austin & Stuart (Stat Med 2015;34:3661) weighted
 * variance  W / (W^2 - W2) * M2, which is the usual n - 1 variance when every w = 1.
 *
 * add (West, CACM 1979;22:532, weighted form of Welford 1962):
 *   W' = W + w;  delta = x - mean;  mean' = mean + delta w / W';  M2' = M2 + w delta (x - mean')
 * remove: the exact algebraic inverse of add, mean_old = mean - w (x - mean) / (W - w),
 *   M2_old = M2 - w (x - mean_old)(x - mean). Removing a value that was never added cannot be
 *   detected; removing most of the data from a large spread loses relative precision
 *   (cancellation), as with any downdate.
 * merge (Chan, Golub & LeVeque, 1979 technical report / Am Stat 1983;37:242):
 *   W = Wa + Wb;  delta = mean_b - mean_a;  mean = mean_a + delta Wb / W;
 *   M2 = M2a + M2b + delta^2 Wa Wb / W
 *
 * Numerics: the moments are kept about a shift K (the first value added), i.e. on x - K, which
 * is exact for values near K (Sterbenz). Without it, values like 1e9 + N(0, 1) lose most of
 * their variance digits to the rounding of the running mean (and a first weighted add from
 * mean 0 could leave M2 of order w |x| ulp(x), even negative). The first add sets the mean
 * exactly and M2 = 0.
 *
 * State is plain JSON numbers (`toJSON()`, `MomentAccumulator.fromState()`), suitable for a
 * jsonb column; doubles survive JSON.stringify/parse exactly. `mean` in the state is the
 * mean itself; the optional `shift` and `shiftedMean` (mean - shift, kept exactly) restore the
 * internal shift; a state without them (e.g. built from SQL aggregates) takes its mean as the
 * shift.
 *
 * @throws {RangeError} add/remove with a non-finite value or a weight that is not finite and > 0;
 *   remove from an empty accumulator or of more weight than it holds; reading `mean` when empty or
 *   `variance` with fewer than two values of positive weight; `fromState` with an invalid state.
 * @example
 * const acc = createAccumulator();
 * acc.add(4); acc.add(7); acc.add(13, 2);
 * acc.mean;     // 9.25
 * acc.variance; // Austin & Stuart weighted variance
 * const copy = MomentAccumulator.fromState(JSON.parse(JSON.stringify(acc)));
 */
export type AccumulatorState = {
  version: 1;
  n: number;
  sumWeights: number;
  sumSquaredWeights: number;
  mean: number;
  m2: number;
  /** Internal shift K (optional; see above). */
  shift?: number;
  /** mean - K, exactly as held (optional; used only together with `shift`). */
  shiftedMean?: number;
};

const FN = 'accumulator';

export class MomentAccumulator {
  #n = 0;
  #w = 0;
  #w2 = 0;
  /** Mean of x - K (see the doc block). */
  #mean = 0;
  #m2 = 0;
  #shift = 0;

  /** Number of values currently held (adds minus removes). */
  get n(): number {
    return this.#n;
  }
  get sumWeights(): number {
    return this.#w;
  }
  get sumSquaredWeights(): number {
    return this.#w2;
  }
  /** Weighted sum of squared deviations from the mean, sum w (x - mean)^2. */
  get sumSquaredDeviations(): number {
    return this.#m2;
  }

  get mean(): number {
    if (this.#n === 0) throw new RangeError(`${FN}: mean is undefined for an empty accumulator`);
    return this.#shift + this.#mean;
  }

  /** Austin & Stuart weighted variance; equals the n - 1 sample variance with unit weights. */
  get variance(): number {
    const denom = this.#w * this.#w - this.#w2;
    if (this.#n < 2 || !(denom > 1e-12 * this.#w * this.#w)) {
      throw new RangeError(
        `${FN}: variance needs at least two values with positive weight, got n = ${this.#n}`,
      );
    }
    return (this.#w / denom) * this.#m2;
  }

  get sd(): number {
    return Math.sqrt(this.variance);
  }

  add(x: number, w = 1): this {
    if (!Number.isFinite(x)) throw new RangeError(`${FN}.add: x must be a finite number, got ${String(x)}`);
    if (!(w > 0) || w === Number.POSITIVE_INFINITY) {
      throw new RangeError(`${FN}.add: w must be a finite number greater than 0, got ${String(w)}`);
    }
    if (this.#n === 0) {
      this.#shift = x;
      this.#mean = 0;
      this.#m2 = 0;
      this.#w = w;
      this.#w2 = w * w;
      this.#n = 1;
      return this;
    }
    const xs = x - this.#shift;
    const W = this.#w + w;
    const delta = xs - this.#mean;
    const mean = this.#mean + (delta * w) / W;
    this.#m2 += w * delta * (xs - mean);
    this.#mean = mean;
    this.#w = W;
    this.#w2 += w * w;
    this.#n += 1;
    return this;
  }

  remove(x: number, w = 1): this {
    if (!Number.isFinite(x)) throw new RangeError(`${FN}.remove: x must be a finite number, got ${String(x)}`);
    if (!(w > 0) || w === Number.POSITIVE_INFINITY) {
      throw new RangeError(`${FN}.remove: w must be a finite number greater than 0, got ${String(w)}`);
    }
    if (this.#n === 0) throw new RangeError(`${FN}.remove: the accumulator is empty`);
    if (this.#n === 1) {
      if (Math.abs(w - this.#w) > 1e-9 * this.#w) {
        throw new RangeError(`${FN}.remove: w = ${w} does not match the weight ${this.#w} of the last value held`);
      }
      this.reset();
      return this;
    }
    const W = this.#w - w;
    if (!(W > 1e-12 * this.#w)) {
      throw new RangeError(`${FN}.remove: w = ${w} is not less than the total weight ${this.#w} of ${this.#n} values`);
    }
    const xs = x - this.#shift;
    const meanOld = this.#mean - (w * (xs - this.#mean)) / W;
    const m2 = this.#m2 - w * (xs - meanOld) * (xs - this.#mean);
    this.#m2 = m2 > 0 ? m2 : 0; // rounding can leave a tiny negative value
    this.#mean = meanOld;
    this.#w = W;
    this.#w2 = Math.max(0, this.#w2 - w * w);
    this.#n -= 1;
    return this;
  }

  /** Adds the other accumulator's values into this one (the other is not changed). */
  merge(other: MomentAccumulator): this {
    if (!(other instanceof MomentAccumulator)) {
      throw new TypeError(`${FN}.merge: other must be an accumulator from createAccumulator()`);
    }
    if (other.#n === 0) return this;
    if (this.#n === 0) {
      this.#n = other.#n;
      this.#w = other.#w;
      this.#w2 = other.#w2;
      this.#mean = other.#mean;
      this.#m2 = other.#m2;
      this.#shift = other.#shift;
      return this;
    }
    const W = this.#w + other.#w;
    // other's mean about this shift: (K_b - K_a) + mean_b, then minus mean_a.
    const delta = other.#shift - this.#shift + other.#mean - this.#mean;
    this.#mean += (delta * other.#w) / W;
    this.#m2 += other.#m2 + (delta * delta * this.#w * other.#w) / W;
    this.#w = W;
    this.#w2 += other.#w2;
    this.#n += other.#n;
    return this;
  }

  reset(): this {
    this.#n = 0;
    this.#w = 0;
    this.#w2 = 0;
    this.#mean = 0;
    this.#m2 = 0;
    this.#shift = 0;
    return this;
  }

  clone(): MomentAccumulator {
    return MomentAccumulator.fromState(this.toJSON());
  }

  toJSON(): AccumulatorState {
    return {
      version: 1,
      n: this.#n,
      sumWeights: this.#w,
      sumSquaredWeights: this.#w2,
      mean: this.#shift + this.#mean,
      m2: this.#m2,
      shift: this.#shift,
      shiftedMean: this.#mean,
    };
  }

  /** Rebuilds an accumulator from `toJSON()` output (e.g. read back from a jsonb column). */
  static fromState(state: unknown): MomentAccumulator {
    const f = `${FN}.fromState`;
    if (state === null || typeof state !== 'object') {
      throw new TypeError(`${f}: state must be an object from toJSON(), got ${state === null ? 'null' : typeof state}`);
    }
    const s = state as Record<string, unknown>;
    if (s.version !== 1) throw new RangeError(`${f}: state.version must be 1, got ${JSON.stringify(s.version)}`);
    for (const k of ['n', 'sumWeights', 'sumSquaredWeights', 'mean', 'm2'] as const) {
      const v = s[k];
      if (typeof v !== 'number' || !Number.isFinite(v)) {
        throw new RangeError(`${f}: state.${k} must be a finite number, got ${JSON.stringify(v)}`);
      }
    }
    const n = s.n as number;
    const w = s.sumWeights as number;
    const w2 = s.sumSquaredWeights as number;
    const m2 = s.m2 as number;
    if (!Number.isInteger(n) || n < 0) throw new RangeError(`${f}: state.n must be a non-negative integer, got ${n}`);
    if (w < 0 || w2 < 0 || m2 < 0) throw new RangeError(`${f}: state.sumWeights, sumSquaredWeights and m2 must be >= 0`);
    if ((n === 0) !== (w === 0)) throw new RangeError(`${f}: state.n = ${n} is inconsistent with state.sumWeights = ${w}`);
    const acc = new MomentAccumulator();
    acc.#n = n;
    acc.#w = w;
    acc.#w2 = w2;
    if (s.shift !== undefined || s.shiftedMean !== undefined) {
      for (const k of ['shift', 'shiftedMean'] as const) {
        const v = s[k];
        if (typeof v !== 'number' || !Number.isFinite(v)) {
          throw new RangeError(`${f}: state.${k} must be a finite number when shift is given, got ${JSON.stringify(v)}`);
        }
      }
      acc.#shift = s.shift as number;
      acc.#mean = s.shiftedMean as number;
    } else {
      acc.#shift = n === 0 ? 0 : (s.mean as number);
      acc.#mean = 0;
    }
    acc.#m2 = m2;
    return acc;
  }
}

/** A new, empty accumulator (see `MomentAccumulator` for the formulas). */
export function createAccumulator(): MomentAccumulator {
  return new MomentAccumulator();
}
