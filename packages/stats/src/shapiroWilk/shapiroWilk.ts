import { normalCdfUpper, normalQuantile } from '../distributions/distributions.js';

/**
 * Shapiro-Wilk W test for normality, by Royston's approximation: Royston, P. (1992),
 * "Approximating the Shapiro-Wilk W-test for non-normality", Statistics and Computing 2:117-119,
 * as implemented in Algorithm AS R94, Royston (1995), Applied Statistics 44(4):547-551
 * (complete samples, 3 <= n <= 5000). W = (sum a_i x_(i))^2 / sum (x_i - xbar)^2:
 *
 * - m_i = Phi^{-1}((i - 3/8)/(n + 1/4)); with u = 1/sqrt(n) and c = m / |m|, the two largest
 *   coefficients are polynomials in u,
 *     a_n     = c_n     + 0.221157u - 0.147981u^2 - 2.071190u^3 + 4.434685u^4 - 2.706056u^5
 *     a_{n-1} = c_{n-1} + 0.042981u - 0.293762u^2 - 1.752461u^3 + 5.682633u^4 - 3.582633u^5
 *   (the second only for n > 5), and the rest are m_i rescaled so that sum a_i^2 = 1; for
 *   n = 3, a = (-sqrt(1/2), 0, sqrt(1/2)).
 * - W is computed, as in AS R94, as the squared correlation of a and the range-scaled data, with
 *   1 - W formed as (|a||x| - a.x)(|a||x| + a.x) / (|a|^2 |x|^2) to keep precision near W = 1.
 * - p-value: n = 3 exact, p = (6/pi)(asin(sqrt W) - pi/3); 4 <= n <= 11,
 *   y = -ln(gamma - ln(1 - W)), gamma = -2.273 + 0.459n, mu = 0.5440 - 0.39978n + 0.025054n^2
 *   - 0.0006714n^3, sigma = exp(1.3822 - 0.77857n + 0.062767n^2 - 0.0020322n^3); n >= 12,
 *   y = ln(1 - W), mu and ln sigma cubic/quadratic in ln n (-1.5861 - 0.31082 L - 0.083751 L^2 +
 *   0.0038915 L^3; -0.4803 - 0.082676 L + 0.0030302 L^2); p = 1 - Phi((y - mu)/sigma).
 *   When ln(1 - W) >= gamma (4 <= n <= 11) the approximation's range is exceeded and AS R94
 *   returns a tiny p; here p = 0 is returned (report as p < 1e-19).
 * The normal quantile is full double precision (jstat), as in R's port; the original Fortran
 * used a 7-digit one, which is why scipy's values differ from R's at about 1e-9.
 *
 * Checked against R shapiro.test values (recorded in scipy's test suite), the Maxima manual,
 * the Shapiro & Wilk (1965) 11-weights example, and scipy 1.17.1 on generated data.
 *
 * @param values finite numbers, 3 <= n <= 5000, not all equal (order does not matter).
 * @throws {TypeError} when values is not an array of numbers.
 * @throws {RangeError} when n < 3 or n > 5000, a value is not finite, or all values are equal.
 * @example
 *   shapiroWilk([148, 154, 158, 160, 161, 162, 166, 170, 182, 195, 236]);
 *   // { w: 0.78881..., p: 0.00670..., n: 11, method: 'Shapiro-Wilk W (Royston 1995, AS R94)' }
 */

export type ShapiroWilkResult = { w: number; p: number; n: number; method: string };

const FN = 'shapiroWilk';
const C1 = [0, 0.221157, -0.147981, -2.07119, 4.434685, -2.706056];
const C2 = [0, 0.042981, -0.293762, -1.752461, 5.682633, -3.582633];
const C3 = [0.544, -0.39978, 0.025054, -6.714e-4];
const C4 = [1.3822, -0.77857, 0.062767, -0.0020322];
const C5 = [-1.5861, -0.31082, -0.083751, 0.0038915];
const C6 = [-0.4803, -0.082676, 0.0030302];
const G = [-2.273, 0.459];

function poly(c: readonly number[], x: number): number {
  let r = 0;
  for (let i = c.length - 1; i >= 0; i--) r = r * x + (c[i] as number);
  return r;
}

/** AS R94 coefficients a_1..a_{n/2} (positive; applied as -a_i to x_(i) and +a_i to x_(n+1-i)). */
function coefficients(n: number): Float64Array {
  const nn2 = Math.floor(n / 2);
  const a = new Float64Array(nn2);
  if (n === 3) {
    a[0] = Math.SQRT1_2;
    return a;
  }
  const m = new Float64Array(nn2);
  let summ2 = 0;
  for (let i = 0; i < nn2; i++) {
    m[i] = normalQuantile((i + 1 - 0.375) / (n + 0.25));
    summ2 += (m[i] as number) ** 2;
  }
  summ2 *= 2;
  const ssumm2 = Math.sqrt(summ2);
  const rsn = 1 / Math.sqrt(n);
  const m1 = m[0] as number;
  const a1 = poly(C1, rsn) - m1 / ssumm2;
  let i1: number;
  let fac: number;
  if (n > 5) {
    i1 = 2;
    const m2 = m[1] as number;
    const a2 = -m2 / ssumm2 + poly(C2, rsn);
    fac = Math.sqrt((summ2 - 2 * m1 * m1 - 2 * m2 * m2) / (1 - 2 * a1 * a1 - 2 * a2 * a2));
    a[1] = a2;
  } else {
    i1 = 1;
    fac = Math.sqrt((summ2 - 2 * m1 * m1) / (1 - 2 * a1 * a1));
  }
  a[0] = a1;
  for (let i = i1; i < nn2; i++) a[i] = -(m[i] as number) / fac;
  return a;
}

/** See the module doc block. */
export function shapiroWilk(values: ArrayLike<number>): ShapiroWilkResult {
  if (values === null || typeof values !== 'object' || typeof (values as { length?: unknown }).length !== 'number') {
    throw new TypeError(`${FN}: values must be an array of numbers`);
  }
  const n = values.length;
  if (n < 3) throw new RangeError(`${FN}: values needs at least 3 observations, got ${n}`);
  if (n > 5000) throw new RangeError(`${FN}: values has ${n} observations; Royston's approximation is valid up to 5000`);
  const x = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const v = values[i];
    if (typeof v !== 'number') throw new TypeError(`${FN}: values[${i}] must be a number, got ${typeof v}`);
    if (!Number.isFinite(v)) throw new RangeError(`${FN}: values[${i}] must be finite, got ${String(v)}`);
    x[i] = v;
  }
  x.sort();
  const range = (x[n - 1] as number) - (x[0] as number);
  if (!(range > 0)) throw new RangeError(`${FN}: values are all equal (zero range); W is undefined`);

  const a = coefficients(n);
  const nn2 = a.length;
  const coef = (i: number): number => (i < nn2 ? -(a[i] as number) : n - 1 - i < nn2 ? (a[n - 1 - i] as number) : 0);
  let sa = 0;
  let sx = 0;
  for (let i = 0; i < n; i++) {
    sa += coef(i);
    sx += (x[i] as number) / range;
  }
  sa /= n;
  sx /= n;
  let ssa = 0;
  let ssx = 0;
  let sax = 0;
  for (let i = 0; i < n; i++) {
    const asa = coef(i) - sa;
    const xsx = (x[i] as number) / range - sx;
    ssa += asa * asa;
    ssx += xsx * xsx;
    sax += asa * xsx;
  }
  const ssassx = Math.sqrt(ssa * ssx);
  const w1 = ((ssassx - sax) * (ssassx + sax)) / (ssa * ssx);
  const w = 1 - w1;
  const method = 'Shapiro-Wilk W (Royston 1995, AS R94)';

  if (n === 3) {
    const p = (6 / Math.PI) * (Math.asin(Math.sqrt(Math.min(1, w))) - Math.PI / 3);
    return { w, p: Math.min(1, Math.max(0, p)), n, method };
  }
  let y = Math.log(w1);
  let mu: number;
  let sigma: number;
  if (n <= 11) {
    const gamma = poly(G, n);
    if (y >= gamma) return { w, p: 0, n, method };
    y = -Math.log(gamma - y);
    mu = poly(C3, n);
    sigma = Math.exp(poly(C4, n));
  } else {
    const ln = Math.log(n);
    mu = poly(C5, ln);
    sigma = Math.exp(poly(C6, ln));
  }
  return { w, p: normalCdfUpper((y - mu) / sigma), n, method };
}
