import { chiSquareCdfUpper } from '../distributions/distributions.js';
import { checkCountTable } from '../inputChecks/inputChecks.js';

/**
 * Pearson's chi-square test of independence for an r x c contingency table of counts.
 *
 * With observed counts O_ij, row totals R_i, column totals C_j and N = sum O_ij:
 *   E_ij = R_i C_j / N
 *   X^2  = sum_ij (O_ij - E_ij)^2 / E_ij,   df = (r - 1)(c - 1),   p = P(chi2_df > X^2)
 * (Pearson 1900; Agresti, An Introduction to Categorical Data Analysis, 2nd ed. 2007, §2.4.)
 * No continuity correction. For a 2 x 2 table X^2 equals z^2 of the pooled two-proportion z
 * test. The p-value is the chi-square upper tail from jstat (`chiSquareCdfUpper`).
 *
 * The chi-square distribution is a large-sample approximation. `smallExpected` flags a table
 * with any expected count below 5 (SMALL_EXPECTED_COUNT): that rule is common practice, not
 * a theorem; Cochran's (1954) version allows up to 20% of cells below 5 and none below 1 (from
 * memory). `minExpected` and `cellsBelowSmallExpected` let the caller apply either. For a 2 x 2
 * table with small expected counts use `fisherExact2x2` instead.
 *
 * @param table rows of non-negative integer counts; at least 2 x 2, rectangular, and no row or
 *   column summing to 0 (drop empty levels first).
 * @returns `{ statistic, df, p, n, rows, columns, expected, minExpected, cellsBelowSmallExpected,
 *   smallExpected, method }`.
 * @throws {TypeError} when table is not an array of arrays, or an entry is not a number.
 * @throws {RangeError} with fewer than 2 rows or columns, ragged rows, a negative or
 *   non-integer count, or a row or column that sums to 0 (named).
 * @example
 *   chiSquareIndependence([[762, 327, 468], [484, 239, 477]]);
 *   // statistic ≈ 30.070, df 2, p ≈ 2.954e-7 (Agresti 2007 party identification by gender)
 */

/** Expected counts below this make the chi-square approximation doubtful (common practice). */
export const SMALL_EXPECTED_COUNT = 5;

export type ChiSquareIndependenceResult = {
  statistic: number;
  df: number;
  p: number;
  n: number;
  rows: number;
  columns: number;
  /** E_ij = R_i C_j / N, same shape as the table. */
  expected: number[][];
  minExpected: number;
  /** How many cells have an expected count below SMALL_EXPECTED_COUNT. */
  cellsBelowSmallExpected: number;
  /** Any expected count below SMALL_EXPECTED_COUNT (common practice: the approximation is doubtful). */
  smallExpected: boolean;
  method: string;
};

export function chiSquareIndependence(table: number[][]): ChiSquareIndependenceResult {
  const fn = 'chiSquareIndependence';
  const { rows, columns, rowTotals, columnTotals, total } = checkCountTable(fn, 'table', table);
  let statistic = 0;
  let minExpected = Infinity;
  let below = 0;
  const expected = table.map((row, i) =>
    row.map((o, j) => {
      const e = ((rowTotals[i] as number) * (columnTotals[j] as number)) / total;
      const d = o - e;
      statistic += (d * d) / e;
      if (e < minExpected) minExpected = e;
      if (e < SMALL_EXPECTED_COUNT) below++;
      return e;
    }),
  );
  const df = (rows - 1) * (columns - 1);
  return {
    statistic,
    df,
    p: chiSquareCdfUpper(statistic, df),
    n: total,
    rows,
    columns,
    expected,
    minExpected,
    cellsBelowSmallExpected: below,
    smallExpected: below > 0,
    method: "Pearson's chi-square test of independence (no continuity correction)",
  };
}
