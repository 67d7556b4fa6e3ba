import { fCdfUpper, tQuantile, tTwoSidedP } from '../distributions/distributions.js';
import {
  CollinearColumnError,
  hc3Covariance,
  leastSquares,
  sequentialSSForOrder,
  typeThreeSS,
  type LeastSquaresFit,
} from '../leastSquares/leastSquares.js';
import { oneWayAnova, type OneWayAnovaResult } from '../oneWayAnova/oneWayAnova.js';
import { buildDesign, prepareDesign, weightedMean, type AncovaInput, type GroupLabel, type PreparedDesign } from './ancovaDesign.js';

/**
 * Analysis of covariance with one grouping factor and any number of covariates, common
 * (parallel) slopes: y_i = mu + tau_g(i) + sum_c beta_c (x_ci - xbar_c) + e_i.
 *
 * Fitted by least squares through Householder QR (`leastSquares`), weighted when `weights`
 * is given (each row scaled by sqrt(w)), on y - ybar (the intercept and fitted values are
 * shifted back; nothing else depends on the shift). Then, with MSE = SSE / (N - k - q):
 * - Terms table, **Type III** SS (each term adjusted for every other term): the extra SS from
 *   adding the term last, computed from R and Q'y by re-triangularising R (no refits). With one
 *   factor, no interaction and covariates, Type II and Type III coincide. For the group this is
 *   the "adjusted treatments" SS (Montgomery, Design and Analysis of Experiments, 8th ed.,
 *   §15.3); F = (SS/df)/MSE, p from F(df, N - k - q); partial eta^2 = SS / (SS + SSE).
 * - `typeI`: sequential SS in the order covariates (in key order), then group; they add up
 *   to the model SS. `partition` uses that order to split the total SS for a chart.
 * - Adjusted (least-squares) means at the covariate grand means (weighted means when
 *   weighted): mu + tau_g, SE = sqrt(MSE * L'(X'X)^{-1}L), 95% CI with t on the error df.
 * - Pairwise differences of adjusted means: SE, t, two-sided p and 95% CI, each unadjusted for
 *   multiplicity (the study's statistician chooses any correction).
 * - Pooled within-group slopes with SE, t, p, CI.
 * - `robust`: HC3 standard errors (MacKinnon & White 1985; Long & Ervin 2000) for the adjusted
 *   means and pairwise differences, and a robust Wald F for the group term,
 *   F = b_T' V_T^{-1} b_T / (k - 1) referred to F(k - 1, N - k - q).
 * - `unadjusted`: the one-way ANOVA of the outcome ignoring the covariates (weighted when
 *   weighted), so the shrinking of the error mean square can be shown side by side.
 *
 * Assumptions to check alongside (see DOMAIN cautions): homogeneity of slopes
 * (`slopeHomogeneityTest`), normal residuals (`shapiroWilk`), equal variances (`leveneTest`).
 *
 * Checked against Montgomery Example 15.5 (fibre strength) and the cracker-promotion example
 * (Kutner et al., ALSM 5th ed., §22.3, attribution from memory) with published SAS PROC GLM
 * values, and against numpy on generated data; see __tests__ and the README.
 *
 * @throws {TypeError} when outcome, group, covariates or weights have the wrong type.
 * @throws {RangeError} for mismatched lengths, non-finite values, fewer than 2 group levels or a
 *   level with fewer than 2 observations, a constant covariate, a covariate collinear with the
 *   group and/or other covariates (named), negative weights, an exact fit (zero residual
 *   variance), too few observations, or an unknown option.
 * @example
 *   const r = ancova({ outcome: [36, 41, 39, 42, 49, 40, 48, 39, 45, 44, 35, 37, 42, 34, 32],
 *     group: [1, 1, 1, 1, 1, 2, 2, 2, 2, 2, 3, 3, 3, 3, 3],
 *     covariates: { diameter: [20, 25, 24, 25, 32, 22, 28, 22, 30, 28, 21, 23, 26, 21, 15] } });
 *   r.terms.find((t) => t.term === 'group')?.f; // ≈ 2.61 (Montgomery Example 15.5)
 *   r.adjustedMeans.map((m) => m.mean);          // ≈ [40.38, 41.42, 38.80]
 */

export type AncovaTerm = { term: string; df: number; ss: number; ms: number; f: number; p: number; partialEtaSquared: number };

export type AncovaResult = {
  n: number;
  groupLevels: GroupLabel[];
  terms: AncovaTerm[];
  /** Sequential SS, covariates (key order) then group. */
  typeI: Array<{ term: string; df: number; ss: number }>;
  model: { df: number; ss: number; ms: number; f: number; p: number };
  error: { df: number; ss: number; ms: number };
  total: { df: number; ss: number };
  rSquared: number;
  adjustedRSquared: number;
  rootMse: number;
  covariateMeans: Record<string, number>;
  adjustedMeans: Array<{ group: GroupLabel; n: number; mean: number; se: number; lower: number; upper: number }>;
  pairwise: Array<{ a: GroupLabel; b: GroupLabel; difference: number; se: number; lower: number; upper: number; t: number; p: number }>;
  slopes: Array<{ covariate: string; estimate: number; se: number; t: number; p: number; lower: number; upper: number }>;
  residuals: number[];
  fitted: number[];
  unadjusted: OneWayAnovaResult;
  /** Error mean square with and without the covariates: the gain in precision. */
  errorMeanSquareComparison: { unadjusted: number; adjusted: number; ratio: number };
  /** Additive split of the total SS: covariates (sequential), group adjusted, error. */
  partition: Array<{ source: string; ss: number; share: number }>;
  robust:
    | {
        available: true;
        method: 'HC3';
        groupWald: { f: number; df1: number; df2: number; p: number };
        adjustedMeans: Array<{ group: GroupLabel; se: number; lower: number; upper: number }>;
        pairwise: Array<{ a: GroupLabel; b: GroupLabel; se: number; t: number; p: number; lower: number; upper: number }>;
      }
    | { available: false; method: 'HC3'; reason: string };
  confidenceLevel: 0.95;
  weighted: boolean;
};

const FN = 'ancova';

/** Fits the common-slope model, translating a collinear column into a message about the covariate. */
export function fitDesign(
  fn: string,
  d: PreparedDesign,
  extra: Float64Array[] = [],
  extraNames: string[] = [],
): { fit: LeastSquaresFit; x: Float64Array; p: number; names: string[]; outcomeShift: number } {
  const { x, p, names } = buildDesign(d, extra);
  const allNames = [...names, ...extraNames];
  // Fit y - ybar (weighted mean): only the intercept and the fitted values move, by ybar, and an
  // outcome with a large offset (1e6 + noise) no longer costs digits of small SS in Q'y.
  const outcomeShift = weightedMean(d.outcome, d.weights);
  const y = Float64Array.from(d.outcome, (v) => v - outcomeShift);
  try {
    const fit = leastSquares({ x, n: d.n, p, y, weights: d.weights, columnNames: allNames });
    return { fit, x, p, names: allNames, outcomeShift };
  } catch (error) {
    if (error instanceof CollinearColumnError) {
      const k = d.levels.length;
      const j = error.columnIndex;
      if (j >= k && j < k + d.covariateNames.length) {
        const name = d.covariateNames[j - k] as string;
        const earlier = d.covariateNames.slice(0, j - k);
        throw new RangeError(
          `${fn}: covariates.${name} is collinear with the group${earlier.length ? ` and covariates ${earlier.join(', ')}` : ''} ` +
            `(for example constant within every group, or a linear combination of other covariates); the design is singular, remove or replace it`,
        );
      }
      throw new RangeError(`${fn}: design is singular at ${allNames[j] ?? `column ${j}`}: ${error.message}`);
    }
    throw error;
  }
}

/** Solves the small SPD system A z = b (Cholesky); A column-major m x m. */
function solveSpd(a: Float64Array, b: Float64Array, m: number): Float64Array {
  const l = new Float64Array(m * m);
  for (let j = 0; j < m; j++) {
    let s = a[j + j * m] as number;
    for (let k = 0; k < j; k++) s -= (l[j + k * m] as number) ** 2;
    if (!(s > 0)) throw new RangeError(`${FN}: robust covariance of the group effects is not positive definite`);
    const d = Math.sqrt(s);
    l[j + j * m] = d;
    for (let i = j + 1; i < m; i++) {
      let t = a[i + j * m] as number;
      for (let k = 0; k < j; k++) t -= (l[i + k * m] as number) * (l[j + k * m] as number);
      l[i + j * m] = t / d;
    }
  }
  const z = new Float64Array(b);
  for (let i = 0; i < m; i++) {
    let s = z[i] as number;
    for (let k = 0; k < i; k++) s -= (l[i + k * m] as number) * (z[k] as number);
    z[i] = s / (l[i + i * m] as number);
  }
  for (let i = m - 1; i >= 0; i--) {
    let s = z[i] as number;
    for (let k = i + 1; k < m; k++) s -= (l[k + i * m] as number) * (z[k] as number);
    z[i] = s / (l[i + i * m] as number);
  }
  return z;
}

/** c' V c for a sparse contrast given as [index, coefficient] pairs. */
function quadForm(v: Float64Array, p: number, c: Array<[number, number]>): number {
  let s = 0;
  for (const [i, ci] of c) for (const [j, cj] of c) s += ci * cj * (v[i + j * p] as number);
  return s;
}

/** Weighted one-way ANOVA in the same result shape as `oneWayAnova`. */
function weightedOneWay(d: PreparedDesign, totalSS: number, grandMean: number): OneWayAnovaResult {
  const k = d.levels.length;
  const sums = new Float64Array(k);
  const wsum = new Float64Array(k);
  const w = d.weights as Float64Array;
  for (let i = 0; i < d.n; i++) {
    const li = d.levelIndex[i] as number;
    sums[li] = (sums[li] as number) + (w[i] as number) * (d.outcome[i] as number);
    wsum[li] = (wsum[li] as number) + (w[i] as number);
  }
  const means = Array.from(sums, (s, i) => s / (wsum[i] as number));
  const ssg = new Float64Array(k);
  for (let i = 0; i < d.n; i++) {
    const li = d.levelIndex[i] as number;
    const e = (d.outcome[i] as number) - (means[li] as number);
    ssg[li] = (ssg[li] as number) + (w[i] as number) * e * e;
  }
  let within = 0;
  let between = 0;
  for (let g = 0; g < k; g++) {
    within += ssg[g] as number;
    between += (wsum[g] as number) * ((means[g] as number) - grandMean) ** 2;
  }
  if (!(within > 0)) throw new RangeError(`${FN}: outcome has zero within-group variation; F is undefined`);
  const dfB = k - 1;
  const dfW = d.nPositive - k;
  const f = between / dfB / (within / dfW);
  return {
    between: { df: dfB, ss: between, ms: between / dfB, f, p: fCdfUpper(f, dfB, dfW) },
    within: { df: dfW, ss: within, ms: within / dfW },
    total: { df: d.nPositive - 1, ss: totalSS },
    etaSquared: between / totalSS,
    rSquared: between / totalSS,
    residualSD: Math.sqrt(within / dfW),
    n: d.nPositive,
    groupCount: k,
    grandMean,
    groups: means.map((m, i) => ({
      index: i,
      n: d.levelCounts[i] as number,
      mean: m,
      sd: Math.sqrt((ssg[i] as number) / ((d.levelCounts[i] as number) - 1)),
    })),
  };
}

/** See the module doc block. */
export function ancova(input: AncovaInput): AncovaResult {
  const d = prepareDesign(FN, input, true);
  const k = d.levels.length;
  const q = d.covariateNames.length;
  if (d.nPositive <= k + q + 0) {
    throw new RangeError(`${FN}: ${d.nPositive} observations are too few for ${k + q} parameters (need more than ${k + q})`);
  }
  const { fit, x, p, outcomeShift } = fitDesign(FN, d);
  const dfE = fit.residualDf;
  const sse = fit.residualSS;

  // Corrected total SS about the (weighted) grand mean, two-pass.
  let sw = 0;
  let sy = 0;
  const w = d.weights;
  for (let i = 0; i < d.n; i++) {
    const wi = w === undefined ? 1 : (w[i] as number);
    sw += wi;
    sy += wi * (d.outcome[i] as number);
  }
  let ybar = sy / sw;
  let corr = 0;
  for (let i = 0; i < d.n; i++) corr += (w === undefined ? 1 : (w[i] as number)) * ((d.outcome[i] as number) - ybar);
  ybar += corr / sw;
  let sst = 0;
  for (let i = 0; i < d.n; i++) {
    const e = (d.outcome[i] as number) - ybar;
    sst += (w === undefined ? 1 : (w[i] as number)) * e * e;
  }
  // An exact fit leaves only rounding noise in SSE (relative 1e-20 of SST is far below any real data).
  if (!(sse > 1e-20 * sst)) {
    throw new RangeError(`${FN}: outcome is fitted exactly (zero residual variance); F tests and standard errors are undefined`);
  }
  const mse = sse / dfE;

  const groupCols = Array.from({ length: k - 1 }, (_, i) => 1 + i);
  const covCol = (j: number): number => k + j;
  const makeTerm = (term: string, df: number, ss: number): AncovaTerm => {
    const f = ss / df / mse;
    return { term, df, ss, ms: ss / df, f, p: fCdfUpper(f, df, dfE), partialEtaSquared: ss / (ss + sse) };
  };
  const terms: AncovaTerm[] = [
    ...d.covariateNames.map((name, j) => makeTerm(name, 1, typeThreeSS(fit, [covCol(j)]))),
    makeTerm('group', k - 1, typeThreeSS(fit, groupCols)),
  ];

  const seqOrder = [0, ...d.covariateNames.map((_, j) => covCol(j)), ...groupCols];
  const seq = sequentialSSForOrder(fit, seqOrder);
  const typeI = [
    ...d.covariateNames.map((name, j) => ({ term: name, df: 1, ss: seq[covCol(j)] as number })),
    { term: 'group', df: k - 1, ss: groupCols.reduce((s, c) => s + (seq[c] as number), 0) },
  ];
  const modelSS = typeI.reduce((s, t) => s + t.ss, 0);
  const modelDf = k - 1 + q;
  const modelF = modelSS / modelDf / mse;

  const tcrit = tQuantile(0.975, dfE);
  // Coefficients on the original outcome scale: the intercept carries the shift back.
  const b = Float64Array.from(fit.coefficients);
  b[0] = (b[0] as number) + outcomeShift;
  const V = fit.unscaledCovariance;
  const meanContrast = (g: number): Array<[number, number]> => (g === 0 ? [[0, 1]] : [[0, 1], [g, 1]]);
  const diffContrast = (a: number, c: number): Array<[number, number]> => {
    const out: Array<[number, number]> = [];
    if (a > 0) out.push([a, 1]);
    if (c > 0) out.push([c, -1]);
    return out;
  };
  const estimate = (c: Array<[number, number]>): number => c.reduce((s, [i, ci]) => s + ci * (b[i] as number), 0);

  const adjustedMeans = d.levels.map((group, g) => {
    const c = meanContrast(g);
    const mean = estimate(c);
    const se = Math.sqrt(mse * quadForm(V, p, c));
    return { group, n: d.levelCounts[g] as number, mean, se, lower: mean - tcrit * se, upper: mean + tcrit * se };
  });
  const pairs: Array<[number, number]> = [];
  for (let a = 0; a < k; a++) for (let c = a + 1; c < k; c++) pairs.push([a, c]);
  const pairwise = pairs.map(([a, c]) => {
    const con = diffContrast(a, c);
    const difference = estimate(con);
    const se = Math.sqrt(mse * quadForm(V, p, con));
    const t = difference / se;
    return {
      a: d.levels[a] as GroupLabel,
      b: d.levels[c] as GroupLabel,
      difference,
      se,
      lower: difference - tcrit * se,
      upper: difference + tcrit * se,
      t,
      p: tTwoSidedP(t, dfE),
    };
  });
  const slopes = d.covariateNames.map((covariate, j) => {
    const estimateJ = b[covCol(j)] as number;
    const se = fit.standardErrors[covCol(j)] as number;
    const t = estimateJ / se;
    return { covariate, estimate: estimateJ, se, t, p: tTwoSidedP(t, dfE), lower: estimateJ - tcrit * se, upper: estimateJ + tcrit * se };
  });

  let unadjusted: OneWayAnovaResult;
  if (w === undefined) {
    const groups = d.levelCounts.map((c) => new Float64Array(c));
    const fill = new Int32Array(k);
    for (let i = 0; i < d.n; i++) {
      const li = d.levelIndex[i] as number;
      const pos = fill[li] as number;
      (groups[li] as Float64Array)[pos] = d.outcome[i] as number;
      fill[li] = pos + 1;
    }
    unadjusted = oneWayAnova(groups);
  } else {
    unadjusted = weightedOneWay(d, sst, ybar);
  }

  const partition = [
    ...typeI.map((t) => ({ source: t.term, ss: t.ss, share: t.ss / sst })),
    { source: 'error', ss: sse, share: sse / sst },
  ];

  const hc = hc3Covariance(fit, x, w);
  let robust: AncovaResult['robust'];
  if (hc.available) {
    const V3 = hc.covariance;
    const m = k - 1;
    const sub = new Float64Array(m * m);
    const bT = new Float64Array(m);
    for (let i = 0; i < m; i++) {
      bT[i] = b[1 + i] as number;
      for (let j = 0; j < m; j++) sub[i + j * m] = V3[1 + i + (1 + j) * p] as number;
    }
    const z = solveSpd(sub, bT, m);
    let wald = 0;
    for (let i = 0; i < m; i++) wald += (bT[i] as number) * (z[i] as number);
    const fW = wald / m;
    robust = {
      available: true,
      method: 'HC3',
      groupWald: { f: fW, df1: m, df2: dfE, p: fCdfUpper(fW, m, dfE) },
      adjustedMeans: d.levels.map((group, g) => {
        const se = Math.sqrt(quadForm(V3, p, meanContrast(g)));
        const mean = adjustedMeans[g]?.mean as number;
        return { group, se, lower: mean - tcrit * se, upper: mean + tcrit * se };
      }),
      pairwise: pairs.map(([a, c], i) => {
        const se = Math.sqrt(quadForm(V3, p, diffContrast(a, c)));
        const diff = pairwise[i]?.difference as number;
        const t = diff / se;
        return { a: d.levels[a] as GroupLabel, b: d.levels[c] as GroupLabel, se, t, p: tTwoSidedP(t, dfE), lower: diff - tcrit * se, upper: diff + tcrit * se };
      }),
    };
  } else {
    robust = { available: false, method: 'HC3', reason: hc.reason };
  }

  const rSquared = 1 - sse / sst;
  return {
    n: d.nPositive,
    groupLevels: d.levels,
    terms,
    typeI,
    model: { df: modelDf, ss: modelSS, ms: modelSS / modelDf, f: modelF, p: fCdfUpper(modelF, modelDf, dfE) },
    error: { df: dfE, ss: sse, ms: mse },
    total: { df: d.nPositive - 1, ss: sst },
    rSquared,
    adjustedRSquared: 1 - (sse / dfE) / (sst / (d.nPositive - 1)),
    rootMse: Math.sqrt(mse),
    covariateMeans: Object.fromEntries(d.covariateNames.map((name, j) => [name, d.covariateMeans[j] as number])),
    adjustedMeans,
    pairwise,
    slopes,
    residuals: Array.from(fit.residuals),
    fitted: Array.from(fit.fitted, (v) => v + outcomeShift),
    unadjusted,
    errorMeanSquareComparison: { unadjusted: unadjusted.within.ms, adjusted: mse, ratio: mse / unadjusted.within.ms },
    partition,
    robust,
    confidenceLevel: 0.95,
    weighted: w !== undefined,
  };
}
