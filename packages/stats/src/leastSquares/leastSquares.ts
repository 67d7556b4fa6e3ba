/**
 * Linear least squares through a Householder QR decomposition: the numerical core under
 * `oneWayAnova`-style fits, `ancova` and `slopeHomogeneityTest`.
 *
 * Model: y = X b + e, with X an n x p design stored column-major in a Float64Array (column j
 * occupies x[j*n .. j*n + n - 1]). Optional weights w_i >= 0 give weighted least squares by
 * scaling row i of X and y by sqrt(w_i).
 *
 * Method (Golub & Van Loan, Matrix Computations, 4th ed., §5.2.1 and §5.3.3; the reflector is
 * built as in LAPACK dlarfg): X = Q R with Q orthogonal (n x n, never formed) and R upper
 * triangular (p x p). With c = Q'y,
 *   b         = R^{-1} c[0..p-1]                      (back substitution)
 *   RSS       = sum_i w_i (y_i - x_i'b)^2                (recomputed from the residuals)
 *   (X'X)^{-1} = R^{-1} R^{-T}                           (never by inverting X'X)
 *   SE(b_j)   = sqrt( RSS/(n - p) * [(X'X)^{-1}]_jj )
 *   sequential (Type I) SS of column j, in column order: c_j^2
 * The normal equations are never formed: their condition number is the square of X's, which
 * is what makes NIST's Longley, Wampler and Filip problems fail in naive code.
 *
 * Rank detection: after the first j reflections, the part of column j orthogonal to the
 * preceding columns has norm |R_jj|. If |R_jj| <= tolerance * ||X_j|| (default 1e-10) the
 * column is numerically a linear combination of the preceding ones, and a
 * `CollinearColumnError` naming it is thrown (callers such as `ancova` turn it into a message
 * about the collinear covariate). No column pivoting: the column order is the model order, so
 * the named column is the first one that adds nothing new.
 *
 * Checked against NIST StRD linear regression (Norris, Pontius, NoInt1, NoInt2, Longley,
 * Wampler1-5, Filip): see __tests__/leastSquares.nist.test.ts and the package README.
 *
 * @throws {TypeError} when x or y is not a Float64Array / array of numbers.
 * @throws {RangeError} when lengths do not match, n <= p, a value or weight is not finite, a
 *   weight is negative, or an option is unknown.
 * @throws {CollinearColumnError} (a RangeError) when a column is collinear with earlier ones.
 * @example
 *   // y = 1 + 2 t on t = 0, 1, 2, 3
 *   const x = Float64Array.from([1, 1, 1, 1, 0, 1, 2, 3]);
 *   const fit = leastSquares({ x, n: 4, p: 2, y: [1, 3, 5, 7] });
 *   fit.coefficients; // Float64Array [1, 2]
 */

export type LeastSquaresInput = {
  /** Column-major n x p design. */
  x: Float64Array;
  n: number;
  p: number;
  y: ArrayLike<number>;
  /** Optional non-negative case weights (weighted least squares). */
  weights?: ArrayLike<number> | undefined;
  /** Names used in error messages; defaults to `column 0`, `column 1`, ... */
  columnNames?: readonly string[] | undefined;
  /** Relative threshold on |R_jj| / ||X_j|| below which column j counts as collinear. */
  tolerance?: number | undefined;
  /**
   * Steps of augmented-system iterative refinement (see `refine`); default 2 when n*p <= 200000
   * (cheap there), else 0 (large, well-conditioned ANCOVA designs do not need it).
   */
  refinementSteps?: number | undefined;
};

export type LeastSquaresFit = {
  n: number;
  p: number;
  rank: number;
  coefficients: Float64Array;
  standardErrors: Float64Array;
  /** y - X b on the original (unweighted) scale. */
  residuals: Float64Array;
  fitted: Float64Array;
  /** sum_i w_i r_i^2 (plain RSS without weights). */
  residualSS: number;
  /** Number of rows with positive weight, minus p. */
  residualDf: number;
  /** sqrt(residualSS / residualDf); NaN is never returned: residualDf >= 1 is enforced. */
  residualSD: number;
  /** Upper triangular p x p factor R, column-major (R[i + j*p]). */
  r: Float64Array;
  /** First p entries of Q'y (the "effects"). */
  qty: Float64Array;
  /** Sequential (Type I) SS per column in column order: qty[j]^2. */
  sequentialSS: Float64Array;
  /** (X'X)^{-1} = R^{-1} R^{-T}, column-major p x p (unscaled covariance). */
  unscaledCovariance: Float64Array;
  /** R^{-1}, column-major p x p upper triangular. */
  rInverse: Float64Array;
};

/** A design column that is (numerically) a linear combination of the columns before it. */
export class CollinearColumnError extends RangeError {
  readonly columnIndex: number;
  readonly columnName: string;
  constructor(message: string, columnIndex: number, columnName: string) {
    super(message);
    this.name = 'CollinearColumnError';
    this.columnIndex = columnIndex;
    this.columnName = columnName;
  }
}

const KNOWN_OPTIONS = new Set(['x', 'n', 'p', 'y', 'weights', 'columnNames', 'tolerance', 'refinementSteps']);

function checkInput(input: LeastSquaresInput): void {
  const fn = 'leastSquares';
  if (input === null || typeof input !== 'object') throw new TypeError(`${fn}: input must be an object`);
  for (const key of Object.keys(input)) {
    if (!KNOWN_OPTIONS.has(key)) throw new RangeError(`${fn}: unknown option '${key}'`);
  }
  const { x, n, p, y, weights, tolerance } = input;
  if (!(x instanceof Float64Array)) throw new TypeError(`${fn}: x must be a column-major Float64Array`);
  if (!Number.isInteger(n) || !Number.isInteger(p) || p < 1 || n < 1) {
    throw new RangeError(`${fn}: n and p must be positive integers, got n=${String(n)}, p=${String(p)}`);
  }
  if (x.length !== n * p) throw new RangeError(`${fn}: x has length ${x.length} but n*p = ${n * p}`);
  if (y === null || typeof y !== 'object' || typeof y.length !== 'number') {
    throw new TypeError(`${fn}: y must be an array of numbers`);
  }
  if (y.length !== n) throw new RangeError(`${fn}: y has length ${y.length} but x has ${n} rows`);
  for (let i = 0; i < n; i++) {
    const v = y[i];
    if (typeof v !== 'number' || !Number.isFinite(v)) {
      throw new RangeError(`${fn}: y[${i}] must be a finite number, got ${String(v)}`);
    }
  }
  for (let i = 0; i < x.length; i++) {
    if (!Number.isFinite(x[i] as number)) {
      const j = Math.floor(i / n);
      throw new RangeError(`${fn}: x has a non-finite value in column ${j}, row ${i - j * n}`);
    }
  }
  if (weights !== undefined) {
    if (weights === null || typeof weights !== 'object' || typeof weights.length !== 'number') {
      throw new TypeError(`${fn}: weights must be an array of numbers`);
    }
    if (weights.length !== n) throw new RangeError(`${fn}: weights has length ${weights.length} but y has ${n}`);
    for (let i = 0; i < n; i++) {
      const w = weights[i];
      if (typeof w !== 'number' || !Number.isFinite(w) || w < 0) {
        throw new RangeError(`${fn}: weights[${i}] must be a finite non-negative number, got ${String(w)}`);
      }
    }
  }
  const steps = input.refinementSteps;
  if (steps !== undefined && !(Number.isInteger(steps) && steps >= 0 && steps <= 10)) {
    throw new RangeError(`leastSquares: refinementSteps must be an integer from 0 to 10, got ${String(steps)}`);
  }
  if (tolerance !== undefined && !(tolerance > 0 && tolerance < 1)) {
    throw new RangeError(`${fn}: tolerance must be in (0, 1), got ${String(tolerance)}`);
  }
}

/** Euclidean norm of a[from..to-1] with scaling, so squares of huge values cannot overflow. */
function scaledNorm(a: Float64Array, from: number, to: number): number {
  let scale = 0;
  for (let i = from; i < to; i++) {
    const v = Math.abs(a[i] as number);
    if (v > scale) scale = v;
  }
  if (scale === 0) return 0;
  let s = 0;
  const inv = 1 / scale;
  for (let i = from; i < to; i++) {
    const v = (a[i] as number) * inv;
    s += v * v;
  }
  return scale * Math.sqrt(s);
}

/**
 * In-place Householder QR of the column-major m x q matrix `a` (q <= m), applying the same
 * reflections to the extra vector `c` (length m). Returns R's diagonal in `a` (upper triangle
 * holds R) and the reflectors below it. `onColumn(j, rjj)` lets the caller check rank.
 */
function householderInPlace(
  a: Float64Array,
  m: number,
  q: number,
  c: Float64Array,
  onColumn: (j: number, rjj: number) => void,
): Float64Array {
  const taus = new Float64Array(q);
  for (let k = 0; k < q; k++) {
    const ck = k * m;
    const alpha = a[ck + k] as number;
    const xnorm = scaledNorm(a, ck + k + 1, ck + m);
    let beta: number;
    let tau: number;
    if (xnorm === 0) {
      // Column is already zero below the diagonal: H = I.
      beta = alpha;
      tau = 0;
    } else {
      beta = -Math.sign(alpha || 1) * Math.hypot(alpha, xnorm);
      tau = (beta - alpha) / beta;
      const scale = 1 / (alpha - beta);
      for (let i = ck + k + 1; i < ck + m; i++) a[i] = (a[i] as number) * scale;
    }
    a[ck + k] = beta;
    taus[k] = tau;
    onColumn(k, beta);
    if (tau === 0) continue;
    // Apply H = I - tau v v' (v[k] = 1, v[i] = a[ck + i]) to the remaining columns and to c.
    for (let j = k + 1; j <= q; j++) {
      const target = j < q ? a : c;
      const cj = j < q ? j * m : 0;
      let w = target[cj + k] as number;
      for (let i = k + 1; i < m; i++) w += (a[ck + i] as number) * (target[cj + i] as number);
      w *= tau;
      target[cj + k] = (target[cj + k] as number) - w;
      for (let i = k + 1; i < m; i++) target[cj + i] = (target[cj + i] as number) - w * (a[ck + i] as number);
    }
  }
  return taus;
}

/** Applies Q' (transpose = true) or Q to v in place, from the reflectors stored below R's diagonal. */
function applyQ(a: Float64Array, taus: Float64Array, m: number, q: number, v: Float64Array, transpose: boolean): void {
  for (let step = 0; step < q; step++) {
    const k = transpose ? step : q - 1 - step;
    const tau = taus[k] as number;
    if (tau === 0) continue;
    const ck = k * m;
    let w = v[k] as number;
    for (let i = k + 1; i < m; i++) w += (a[ck + i] as number) * (v[i] as number);
    w *= tau;
    v[k] = (v[k] as number) - w;
    for (let i = k + 1; i < m; i++) v[i] = (v[i] as number) - w * (a[ck + i] as number);
  }
}

/**
 * Compensated accumulation (Ogita, Rump & Oishi, SIAM J Sci Comput 2005;26:1955, "Dot2"):
 * the result is as accurate as if computed in twice the working precision. Used only for the
 * residuals of the iterative refinement below.
 */
class Dot2 {
  hi = 0;
  lo = 0;
  add(t: number): void {
    const s = this.hi + t;
    const bb = s - this.hi;
    this.lo += this.hi - (s - bb) + (t - bb);
    this.hi = s;
  }
  addProduct(x: number, y: number): void {
    const p = x * y;
    const cx = 134217729 * x;
    const xh = cx - (cx - x);
    const xl = x - xh;
    const cy = 134217729 * y;
    const yh = cy - (cy - y);
    const yl = y - yh;
    this.lo += xh * yh - p + xh * yl + xl * yh + xl * yl;
    this.add(p);
  }
  value(): number {
    return this.hi + this.lo;
  }
}

/**
 * Iterative refinement of the augmented system [I X; X' 0][r; b] = [y; 0] (Björck, BIT
 * 1967;7:257; Golub & Van Loan §5.3.8), residuals of both block equations accumulated with
 * Dot2. Each step solves the correction with the existing QR:
 *   h = R^{-T} g,  d = Q'f,  db = R^{-1}(d_1 - h),  dr = Q [h; d_2].
 * It removes the kappa^2 * |r| term of the plain QR error bound, which is what limits
 * NIST Wampler5 (large residuals) to ~5.8 digits otherwise.
 */
function refine(
  a: Float64Array,
  taus: Float64Array,
  xs: (i: number, j: number) => number,
  ys: (i: number) => number,
  n: number,
  p: number,
  b: Float64Array,
  steps: number,
): void {
  const res = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const acc = new Dot2();
    acc.add(ys(i));
    for (let j = 0; j < p; j++) acc.addProduct(-xs(i, j), b[j] as number);
    res[i] = acc.value();
  }
  const f = new Float64Array(n);
  const g = new Float64Array(p);
  const h = new Float64Array(p);
  for (let step = 0; step < steps; step++) {
    for (let i = 0; i < n; i++) {
      const acc = new Dot2();
      acc.add(ys(i));
      acc.add(-(res[i] as number));
      for (let j = 0; j < p; j++) acc.addProduct(-xs(i, j), b[j] as number);
      f[i] = acc.value();
    }
    for (let j = 0; j < p; j++) {
      const acc = new Dot2();
      for (let i = 0; i < n; i++) acc.addProduct(-xs(i, j), res[i] as number);
      g[j] = acc.value();
    }
    // h = R^{-T} g (forward substitution; R is in a's upper triangle)
    for (let i = 0; i < p; i++) {
      let s = g[i] as number;
      for (let k = 0; k < i; k++) s -= (a[k + i * n] as number) * (h[k] as number);
      h[i] = s / (a[i + i * n] as number);
    }
    applyQ(a, taus, n, p, f, true);
    const db = new Float64Array(p);
    for (let i = p - 1; i >= 0; i--) {
      let s = (f[i] as number) - (h[i] as number);
      for (let k = i + 1; k < p; k++) s -= (a[i + k * n] as number) * (db[k] as number);
      db[i] = s / (a[i + i * n] as number);
    }
    for (let i = 0; i < p; i++) f[i] = h[i] as number;
    applyQ(a, taus, n, p, f, false);
    for (let j = 0; j < p; j++) b[j] = (b[j] as number) + (db[j] as number);
    for (let i = 0; i < n; i++) res[i] = (res[i] as number) + (f[i] as number);
  }
}

/** Inverse of the upper triangular p x p matrix R (column-major). */
function invertUpper(r: Float64Array, p: number): Float64Array {
  const inv = new Float64Array(p * p);
  for (let j = 0; j < p; j++) {
    inv[j + j * p] = 1 / (r[j + j * p] as number);
    for (let i = j - 1; i >= 0; i--) {
      let s = 0;
      for (let k = i + 1; k <= j; k++) s += (r[i + k * p] as number) * (inv[k + j * p] as number);
      inv[i + j * p] = -s / (r[i + i * p] as number);
    }
  }
  return inv;
}

/** Fits y = X b by Householder QR. See the module doc block. */
export function leastSquares(input: LeastSquaresInput): LeastSquaresFit {
  checkInput(input);
  const { x, n, p, y, weights } = input;
  const tolerance = input.tolerance ?? 1e-10;
  const names = input.columnNames;
  const nameOf = (j: number): string => names?.[j] ?? `column ${j}`;

  let positive = n;
  if (weights !== undefined) {
    positive = 0;
    for (let i = 0; i < n; i++) if ((weights[i] as number) > 0) positive++;
  }
  if (positive <= p) {
    throw new RangeError(
      `leastSquares: need more observations (with positive weight) than parameters: ${positive} rows for ${p} columns`,
    );
  }

  const a = new Float64Array(x);
  const c = new Float64Array(n);
  if (weights === undefined) {
    for (let i = 0; i < n; i++) c[i] = y[i] as number;
  } else {
    const sw = new Float64Array(n);
    for (let i = 0; i < n; i++) sw[i] = Math.sqrt(weights[i] as number);
    for (let i = 0; i < n; i++) c[i] = (y[i] as number) * (sw[i] as number);
    for (let j = 0; j < p; j++) {
      const cj = j * n;
      for (let i = 0; i < n; i++) a[cj + i] = (a[cj + i] as number) * (sw[i] as number);
    }
  }
  const columnNorms = new Float64Array(p);
  for (let j = 0; j < p; j++) columnNorms[j] = scaledNorm(a, j * n, (j + 1) * n);

  const taus = householderInPlace(a, n, p, c, (j, rjj) => {
    const norm = columnNorms[j] as number;
    if (norm === 0 || Math.abs(rjj) <= tolerance * norm) {
      const earlier = Array.from({ length: j }, (_, k) => nameOf(k));
      const what = norm === 0 ? 'is all zeros' : `is a linear combination of ${earlier.length ? earlier.join(', ') : 'nothing'}`;
      throw new CollinearColumnError(
        `leastSquares: design column '${nameOf(j)}' ${what} (|R_jj|/||x_j|| = ${norm === 0 ? 0 : (Math.abs(rjj) / norm).toExponential(2)}); the design is rank deficient`,
        j,
        nameOf(j),
      );
    }
  });

  const r = new Float64Array(p * p);
  for (let j = 0; j < p; j++) for (let i = 0; i <= j; i++) r[i + j * p] = a[i + j * n] as number;
  const qty = c.slice(0, p);

  const coefficients = new Float64Array(p);
  for (let i = p - 1; i >= 0; i--) {
    let s = qty[i] as number;
    for (let k = i + 1; k < p; k++) s -= (r[i + k * p] as number) * (coefficients[k] as number);
    coefficients[i] = s / (r[i + i * p] as number);
  }
  const steps = input.refinementSteps ?? (n * p <= 200_000 ? 2 : 0);
  if (steps > 0) {
    const sw = weights === undefined ? undefined : Float64Array.from({ length: n }, (_, i) => Math.sqrt(weights[i] as number));
    const xs = sw === undefined ? (i: number, j: number) => x[j * n + i] as number : (i: number, j: number) => (x[j * n + i] as number) * (sw[i] as number);
    const ys = sw === undefined ? (i: number) => y[i] as number : (i: number) => (y[i] as number) * (sw[i] as number);
    refine(a, taus, xs, ys, n, p, coefficients, steps);
  }

  // Residuals from the original X: more accurate than Q applied to the tail of c.
  const fitted = new Float64Array(n);
  for (let j = 0; j < p; j++) {
    const b = coefficients[j] as number;
    const cj = j * n;
    for (let i = 0; i < n; i++) fitted[i] = (fitted[i] as number) + b * (x[cj + i] as number);
  }
  const residuals = new Float64Array(n);
  let residualSS = 0;
  for (let i = 0; i < n; i++) {
    const e = (y[i] as number) - (fitted[i] as number);
    residuals[i] = e;
    residualSS += weights === undefined ? e * e : (weights[i] as number) * e * e;
  }
  const residualDf = positive - p;
  const residualSD = Math.sqrt(residualSS / residualDf);

  const rInverse = invertUpper(r, p);
  const unscaledCovariance = new Float64Array(p * p);
  for (let i = 0; i < p; i++) {
    for (let j = i; j < p; j++) {
      let s = 0;
      // (R^{-1} R^{-T})_ij = sum_k Rinv[i,k] Rinv[j,k], k >= max(i, j) = j
      for (let k = j; k < p; k++) s += (rInverse[i + k * p] as number) * (rInverse[j + k * p] as number);
      unscaledCovariance[i + j * p] = s;
      unscaledCovariance[j + i * p] = s;
    }
  }
  const mse = residualSS / residualDf;
  const standardErrors = new Float64Array(p);
  for (let j = 0; j < p; j++) standardErrors[j] = Math.sqrt(mse * (unscaledCovariance[j + j * p] as number));
  const sequentialSS = new Float64Array(p);
  for (let j = 0; j < p; j++) sequentialSS[j] = (qty[j] as number) ** 2;

  return {
    n,
    p,
    rank: p,
    coefficients,
    standardErrors,
    residuals,
    fitted,
    residualSS,
    residualDf,
    residualSD,
    r,
    qty,
    sequentialSS,
    unscaledCovariance,
    rInverse,
  };
}

/**
 * Sequential (Type I) sums of squares for the columns taken in a different order, computed
 * from the p x p problem min ||Q'y[0..p-1] - R b|| alone: re-triangularising R with its
 * columns permuted (a small Householder QR) rotates Q'y into the effects of the new order.
 * Costs O(p^3), independent of n. Returns SS indexed by original column index.
 *
 * Type III SS of a set of columns T = this with T placed last, summed over T.
 */
export function sequentialSSForOrder(fit: LeastSquaresFit, order: readonly number[]): Float64Array {
  const { p, r, qty } = fit;
  if (order.length !== p || new Set(order).size !== p || order.some((j) => !Number.isInteger(j) || j < 0 || j >= p)) {
    throw new RangeError(`sequentialSSForOrder: order must be a permutation of 0..${p - 1}`);
  }
  const a = new Float64Array(p * p);
  order.forEach((col, k) => {
    for (let i = 0; i <= col; i++) a[i + k * p] = r[i + col * p] as number;
  });
  const c = new Float64Array(qty);
  householderInPlace(a, p, p, c, () => undefined);
  const ss = new Float64Array(p);
  order.forEach((col, k) => {
    ss[col] = (c[k] as number) ** 2;
  });
  return ss;
}

/** Sum of Type III SS for the column set `columns` (the extra SS from adding them last). */
export function typeThreeSS(fit: LeastSquaresFit, columns: readonly number[]): number {
  const set = new Set(columns);
  const order = [...Array.from({ length: fit.p }, (_, j) => j).filter((j) => !set.has(j)), ...columns];
  const ss = sequentialSSForOrder(fit, order);
  let s = 0;
  for (const j of columns) s += ss[j] as number;
  return s;
}

export type Hc3Result =
  | { available: true; covariance: Float64Array }
  | { available: false; reason: string };

/**
 * HC3 heteroscedasticity-consistent covariance (MacKinnon & White, J Econometrics 1985;29:305;
 * Long & Ervin, Am Stat 2000;54:217):
 *   V = (X'X)^{-1} X' diag( e_i^2 / (1 - h_ii)^2 ) X (X'X)^{-1},  h_ii = x_i'(X'X)^{-1}x_i.
 * Computed as R^{-1} [ sum_i omega_i z_i z_i' ] R^{-T} with z_i = R^{-T} x_i and h_ii = |z_i|^2,
 * so (X'X) is never inverted. With weights, x_i and e_i are the sqrt(w)-scaled row and residual.
 * When some h_ii is 1 (a row fitted exactly by its own parameter) HC3 is undefined; this is
 * reported as `available: false` with the reason rather than as NaN.
 */
export function hc3Covariance(fit: LeastSquaresFit, x: Float64Array, weights?: ArrayLike<number>): Hc3Result {
  const { n, p, rInverse, residuals } = fit;
  const meat = new Float64Array(p * p);
  const z = new Float64Array(p);
  const row = new Float64Array(p);
  for (let i = 0; i < n; i++) {
    const w = weights === undefined ? 1 : (weights[i] as number);
    if (w === 0) continue;
    const sw = Math.sqrt(w);
    for (let j = 0; j < p; j++) row[j] = (x[j * n + i] as number) * sw;
    // z = R^{-T} row: z_k = sum_{j <= k} Rinv[j,k] row_j
    let h = 0;
    for (let k = 0; k < p; k++) {
      let s = 0;
      for (let j = 0; j <= k; j++) s += (rInverse[j + k * p] as number) * (row[j] as number);
      z[k] = s;
      h += s * s;
    }
    if (h >= 1 - 1e-10) {
      return { available: false, reason: `row ${i} has leverage 1, so its HC3 weight e^2/(1-h)^2 is undefined` };
    }
    const e = (residuals[i] as number) * sw;
    const omega = (e * e) / ((1 - h) * (1 - h));
    for (let k = 0; k < p; k++) {
      const zk = omega * (z[k] as number);
      for (let l = k; l < p; l++) meat[k + l * p] = (meat[k + l * p] as number) + zk * (z[l] as number);
    }
  }
  for (let k = 0; k < p; k++) for (let l = 0; l < k; l++) meat[k + l * p] = meat[l + k * p] as number;
  // V = Rinv * meat * Rinv'
  const tmp = new Float64Array(p * p);
  for (let i = 0; i < p; i++) {
    for (let l = 0; l < p; l++) {
      let s = 0;
      for (let k = i; k < p; k++) s += (rInverse[i + k * p] as number) * (meat[k + l * p] as number);
      tmp[i + l * p] = s;
    }
  }
  const covariance = new Float64Array(p * p);
  for (let i = 0; i < p; i++) {
    for (let j = 0; j < p; j++) {
      let s = 0;
      for (let l = j; l < p; l++) s += (tmp[i + l * p] as number) * (rInverse[j + l * p] as number);
      covariance[i + j * p] = s;
    }
  }
  return { available: true, covariance };
}
