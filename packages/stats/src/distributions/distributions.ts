import { createRequire } from 'node:module';

/**
 * Typed wrappers over jstat's F, Student t, normal and chi-square distribution functions,
 * shared by the ANOVA, ANCOVA, Levene and Shapiro-Wilk modules. Other modules in this
 * package (the balance, propensity and allocation modules too) may use it.
 *
 * Why a wrapper: jstat 1.9 ships no type declarations and is a CommonJS (UMD) bundle, so under
 * ESM + `module: nodenext` a bare `import jStat from 'jstat'` has no types (TS7016 under
 * strict). It is loaded with `createRequire` and only the functions used here are typed,
 * which avoids a global `declare module 'jstat'` that would clash with any other declaration.
 *
 * Tail probabilities are computed directly from the regularized incomplete beta function
 * I_x(a, b) rather than as `1 - cdf`, so small p-values keep their relative precision:
 * - F upper tail:  P(F > f) = I_{d2/(d2 + d1 f)}(d2/2, d1/2)
 * - t two-sided:   P(|T| > t) = I_{df/(df + t^2)}(df/2, 1/2)
 * - normal upper:  P(Z > z) = erfc(z / sqrt 2) / 2
 * (Abramowitz & Stegun 26.6.2, 26.7.1, 26.2.29; memory.)
 *
 * Accuracy: jstat's continued fraction for I_x(a, b) stops at a relative step of 3e-7 or
 * after 100 iterations, so p-values agree with scipy 1.17.1 to about 1e-7 relative for
 * denominator df up to ~1e6 and far better for small df (checked in the tests). Quantiles from
 * jstat's inverse incomplete beta are accurate to about 1e-8 relative. This is ample for
 * reported p-values and confidence limits; the NIST checks are on SS, MS and F, not on p.
 *
 * @throws {RangeError} when a degrees-of-freedom argument is not a positive finite number, a
 *   probability is outside (0, 1), or a statistic is NaN.
 * @example
 *   fCdfUpper(9.59, 2, 12);   // ≈ 0.0032
 *   tQuantile(0.975, 11);     // ≈ 2.200985
 */

type JStat = {
  ibeta(x: number, a: number, b: number): number;
  gammaln(x: number): number;
  erfc(x: number): number;
  lowRegGamma(a: number, x: number): number;
  normal: { inv(p: number, mean: number, sd: number): number };
  studentt: { inv(p: number, dof: number): number };
  centralF: { inv(p: number, df1: number, df2: number): number };
  chisquare: { inv(p: number, dof: number): number };
};

const require = createRequire(import.meta.url);
const jStat = require('jstat') as JStat;

function checkDf(fn: string, name: string, df: number): void {
  if (typeof df !== 'number' || !(df > 0) || !Number.isFinite(df)) {
    throw new RangeError(`${fn}: ${name} must be a positive finite number, got ${String(df)}`);
  }
}

function checkStat(fn: string, name: string, x: number): void {
  if (typeof x !== 'number' || Number.isNaN(x)) {
    throw new RangeError(`${fn}: ${name} must be a number (not NaN), got ${String(x)}`);
  }
}

function checkProbability(fn: string, p: number): void {
  if (typeof p !== 'number' || !(p > 0 && p < 1)) {
    throw new RangeError(`${fn}: p must be strictly between 0 and 1, got ${String(p)}`);
  }
}

function clamp01(p: number): number {
  return p < 0 ? 0 : p > 1 ? 1 : p;
}

/** P(F > f) for the F distribution with (df1, df2) degrees of freedom. */
export function fCdfUpper(f: number, df1: number, df2: number): number {
  checkStat('fCdfUpper', 'f', f);
  checkDf('fCdfUpper', 'df1', df1);
  checkDf('fCdfUpper', 'df2', df2);
  if (f <= 0) return 1;
  if (f === Infinity) return 0;
  return clamp01(jStat.ibeta(df2 / (df2 + df1 * f), df2 / 2, df1 / 2));
}

/** F quantile: the f with P(F <= f) = p. */
export function fQuantile(p: number, df1: number, df2: number): number {
  checkProbability('fQuantile', p);
  checkDf('fQuantile', 'df1', df1);
  checkDf('fQuantile', 'df2', df2);
  return jStat.centralF.inv(p, df1, df2);
}

/** Two-sided P(|T| > |t|) for Student's t with df degrees of freedom. */
export function tTwoSidedP(t: number, df: number): number {
  checkStat('tTwoSidedP', 't', t);
  checkDf('tTwoSidedP', 'df', df);
  if (!Number.isFinite(t)) return 0;
  return clamp01(jStat.ibeta(df / (df + t * t), df / 2, 0.5));
}

/** P(T <= t) for Student's t with df degrees of freedom. */
export function tCdf(t: number, df: number): number {
  checkStat('tCdf', 't', t);
  checkDf('tCdf', 'df', df);
  if (t === Infinity) return 1;
  if (t === -Infinity) return 0;
  const tail = 0.5 * jStat.ibeta(df / (df + t * t), df / 2, 0.5);
  return t < 0 ? tail : 1 - tail;
}

/**
 * P(|T| <= t), t >= 0, for an integer df by the finite series of Abramowitz & Stegun 26.7.3
 * (df odd) and 26.7.4 (df even), with theta = atan(t / sqrt(df)):
 *   odd:  (2/pi) [theta + sin(theta) (cos(theta) + (2/3) cos^3(theta) + ... )]   (df > 1)
 *   even: sin(theta) [1 + (1/2) cos^2(theta) + (1*3)/(2*4) cos^4(theta) + ...]
 * Positive terms only, so it is accurate to rounding accumulated over df/2 terms (jstat's
 * incomplete beta stops at a ~3e-7 step).
 */
function tCentralIntegerDf(t: number, df: number): number {
  const theta = Math.atan(t / Math.sqrt(df));
  const c2 = Math.cos(theta) ** 2;
  const sin = Math.sin(theta);
  if (df % 2 === 1) {
    if (df === 1) return (2 / Math.PI) * theta;
    let term = Math.cos(theta);
    let sum = term;
    for (let k = 3; k <= df - 2; k += 2) {
      term *= (c2 * (k - 1)) / k;
      sum += term;
    }
    return (2 / Math.PI) * (theta + sin * sum);
  }
  let term = 1;
  let sum = 1;
  for (let k = 2; k <= df - 2; k += 2) {
    term *= (c2 * (k - 1)) / k;
    sum += term;
  }
  return sin * sum;
}

/**
 * Student t quantile: the t with P(T <= t) = p. jstat's inverse (about 1e-8 relative) is
 * polished, for integer df up to 1e7 and 1e-6 < p < 1 - 1e-6, by Newton steps on the exact
 * series CDF above (A&S equation numbers from memory), which gives confidence limits to about
 * 1e-12 relative (1e-10 at df ~ 1e6; checked against scipy.stats.t.ppf).
 */
export function tQuantile(p: number, df: number): number {
  checkProbability('tQuantile', p);
  checkDf('tQuantile', 'df', df);
  let x = jStat.studentt.inv(p, df);
  if (!Number.isInteger(df) || df > 1e7 || !(p > 1e-6 && p < 1 - 1e-6) || p === 0.5) return p === 0.5 ? 0 : x;
  const logNorm = jStat.gammaln((df + 1) / 2) - jStat.gammaln(df / 2) - 0.5 * Math.log(df * Math.PI);
  for (let i = 0; i < 3; i++) {
    const a = tCentralIntegerDf(Math.abs(x), df);
    const cdf = x >= 0 ? 0.5 + a / 2 : (1 - a) / 2;
    const density = Math.exp(logNorm - ((df + 1) / 2) * Math.log1p((x * x) / df));
    const step = (cdf - p) / density;
    x -= step;
    if (Math.abs(step) <= 1e-15 * Math.abs(x)) break;
  }
  return x;
}

const INV_SQRT_2PI = 0.3989422804014327;

/**
 * Upper normal tail Q(z). For z >= 3 jstat's erfc loses relative precision (it returns 0
 * beyond z ~ 8.3), so there Q(z) = phi(z) R(z) with Mills' ratio from its continued fraction
 * R(z) = 1/(z + 1/(z + 2/(z + 3/(z + ...)))) (Abramowitz & Stegun 26.2.14), evaluated
 * backwards from a fixed depth; below 3, jstat's erfc (about 1e-12 relative there).
 */
function upperTail(z: number): number {
  if (z < 3) return 0.5 * jStat.erfc(z / Math.SQRT2);
  if (z > 38.5) return 0; // below the smallest double
  let r = z;
  for (let k = 300; k >= 1; k--) r = z + k / r;
  return (INV_SQRT_2PI * Math.exp(-0.5 * z * z)) / r;
}

/** Phi(z), the standard normal CDF, accurate in relative terms in both tails. */
export function normalCdf(z: number): number {
  checkStat('normalCdf', 'z', z);
  return z < 0 ? upperTail(-z) : 1 - upperTail(z);
}

/** 1 - Phi(z), the standard normal upper tail, without cancellation. */
export function normalCdfUpper(z: number): number {
  checkStat('normalCdfUpper', 'z', z);
  return z < 0 ? 1 - upperTail(-z) : upperTail(z);
}

/**
 * Phi^{-1}(p), the standard normal quantile: jstat's value polished by two Newton steps on
 * the accurate tail above (jstat alone is ~1e-9 relative at p = 1e-10).
 */
export function normalQuantile(p: number): number {
  checkProbability('normalQuantile', p);
  if (p === 0.5) return 0;
  const lower = p < 0.5;
  const q = lower ? p : 1 - p; // tail probability; symmetric, so solve on the lower side
  let x = jStat.normal.inv(q, 0, 1);
  for (let i = 0; i < 2; i++) {
    const density = INV_SQRT_2PI * Math.exp(-0.5 * x * x);
    x -= (upperTail(-x) - q) / density;
  }
  return lower ? x : -x;
}

/** P(X > x) for the chi-square distribution with k degrees of freedom. */
export function chiSquareCdfUpper(x: number, k: number): number {
  checkStat('chiSquareCdfUpper', 'x', x);
  checkDf('chiSquareCdfUpper', 'k', k);
  if (x <= 0) return 1;
  if (x === Infinity) return 0;
  return clamp01(1 - jStat.lowRegGamma(k / 2, x / 2));
}

/** Chi-square quantile: the x with P(X <= x) = p. */
export function chiSquareQuantile(p: number, k: number): number {
  checkProbability('chiSquareQuantile', p);
  checkDf('chiSquareQuantile', 'k', k);
  return jStat.chisquare.inv(p, k);
}
