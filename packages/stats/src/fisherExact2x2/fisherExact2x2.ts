import { checkCountTable } from '../inputChecks/inputChecks.js';

/**
 * Fisher's exact test for a 2 x 2 table of counts [[a, b], [c, d]] (Fisher, Statistical Methods
 * for Research Workers, 1934 §21.02; Agresti, Categorical Data Analysis, 2nd ed. 2002, §3.5.1;
 * both from memory).
 *
 * Conditioning on both margins (row totals r1 = a + b, r2 = c + d, column total c1 = a + c,
 * N = r1 + r2), the count in the first cell is hypergeometric under independence:
 *   P(x) = C(r1, x) C(r2, c1 - x) / C(N, c1),   max(0, c1 - r2) <= x <= min(r1, c1)
 * computed as exp of sums of log-factorials, then divided by their sum over the support (which
 * is 1 up to rounding). The p-values are
 *   pLess    = sum_{x <= a} P(x)   (odds ratio below 1)
 *   pGreater = sum_{x >= a} P(x)   (odds ratio above 1)
 *   p        = sum of P(x) over every table no more likely than the observed one (two-sided)
 * "No more likely" allows a relative tolerance of 1e-7, so that tables of equal probability
 * (e.g. the mirror image of a symmetric table) are not split by rounding; R's fisher.test uses
 * the same tolerance (from memory).
 *
 * Log-factorials: ln n! as a running sum of ln k for n <= 1024 (cached), and for larger n the
 * Stirling series n ln n - n + ln(2 pi n)/2 + 1/(12n) - 1/(360n^3) + 1/(1260n^5) - 1/(1680n^7)
 * (Abramowitz & Stegun 6.1.41, from memory; truncation error below 1e-27 there). jstat's
 * gammaln is not used: it is accurate to only about 2e-10.
 *
 * @param table [[a, b], [c, d]] of non-negative integer counts, no row or column summing to 0.
 * @returns `{ p, pLess, pGreater, probability, n, method }`; `probability` is P(observed table).
 * @throws {TypeError} when table is not an array of arrays, or an entry is not a number.
 * @throws {RangeError} when the table is not 2 x 2, a count is negative or not an integer, or
 *   a row or column sums to 0.
 * @example
 *   fisherExact2x2([[3, 1], [1, 3]]);
 *   // p = 34/70 ≈ 0.4857, pGreater = 17/70 ≈ 0.2429 (Fisher's tea-tasting experiment)
 */

export type FisherExactResult = {
  /** Two-sided: sum of the probabilities of the tables no more likely than the observed one. */
  p: number;
  pLess: number;
  pGreater: number;
  /** Hypergeometric probability of the observed table. */
  probability: number;
  n: number;
  method: string;
};

const EXACT_LIMIT = 1024;
const logFactorials: number[] = [0];

/** ln n! for a non-negative integer n. */
function logFactorial(n: number): number {
  if (n <= EXACT_LIMIT) {
    for (let k = logFactorials.length; k <= n; k++) logFactorials.push((logFactorials[k - 1] as number) + Math.log(k));
    return logFactorials[n] as number;
  }
  const inv = 1 / n;
  const inv2 = inv * inv;
  const series = inv * (1 / 12 - inv2 * (1 / 360 - inv2 * (1 / 1260 - inv2 / 1680)));
  return n * Math.log(n) - n + 0.5 * Math.log(2 * Math.PI * n) + series;
}

/** Relative tolerance for "no more likely than the observed table". */
const RELATIVE_TIE = 1e-7;

export function fisherExact2x2(table: number[][]): FisherExactResult {
  const fn = 'fisherExact2x2';
  const { rows, columns, rowTotals, columnTotals, total } = checkCountTable(fn, 'table', table);
  if (rows !== 2 || columns !== 2) throw new RangeError(`${fn}: table must be 2 x 2, got ${rows} x ${columns}`);
  const r1 = rowTotals[0] as number;
  const r2 = rowTotals[1] as number;
  const c1 = columnTotals[0] as number;
  const c2 = columnTotals[1] as number;
  const a = (table[0] as number[])[0] as number;
  const constant = logFactorial(r1) + logFactorial(r2) + logFactorial(c1) + logFactorial(c2) - logFactorial(total);
  const logP = (x: number) =>
    constant - logFactorial(x) - logFactorial(r1 - x) - logFactorial(c1 - x) - logFactorial(r2 - c1 + x);

  const lo = Math.max(0, c1 - r2);
  const hi = Math.min(r1, c1);
  const observed = logP(a);
  const threshold = observed + Math.log1p(RELATIVE_TIE);
  let all = 0;
  let less = 0;
  let greater = 0;
  let twoSided = 0;
  for (let x = lo; x <= hi; x++) {
    const lp = x === a ? observed : logP(x);
    const px = Math.exp(lp);
    all += px;
    if (x <= a) less += px;
    if (x >= a) greater += px;
    if (lp <= threshold) twoSided += px;
  }
  // Dividing by the sum over the whole support cancels the rounding of the common factor (the
  // margins' log-factorials), and gives exactly 1 when every table is counted.
  const clamp = (v: number) => (v > 1 ? 1 : v);
  return {
    p: clamp(twoSided / all),
    pLess: clamp(less / all),
    pGreater: clamp(greater / all),
    probability: Math.exp(observed) / all,
    n: total,
    method: "Fisher's exact test (two-sided: tables no more likely than the observed one)",
  };
}
