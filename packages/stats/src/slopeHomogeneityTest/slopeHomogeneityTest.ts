import { fCdfUpper } from '../distributions/distributions.js';
import { CollinearColumnError } from '../leastSquares/leastSquares.js';
import { fitDesign } from '../ancova/ancova.js';
import { prepareDesign, type AncovaInput, type GroupLabel } from '../ancova/ancovaDesign.js';

/**
 * Homogeneity of regression slopes: the group x covariate interaction F test that the
 * common-slope ANCOVA assumes away.
 *
 * Common-slope model (k intercepts, q common slopes) against the separate-slopes model (k
 * intercepts, k*q slopes: the common model plus (k-1)*q indicator x centred-covariate columns):
 *   SS_interaction = SSE_common - SSE_separate      df1 = (k - 1) q
 *   F = (SS_interaction / df1) / (SSE_separate / df2),   df2 = N - k (1 + q)
 *   p = P(F_{df1, df2} > F)
 * (Montgomery, Design and Analysis of Experiments, §15.3; Kutner et al., ALSM §22.4, memory.)
 * SS_interaction is the sequential SS of the interaction columns entered last, i.e. the sum of
 * their squared Q'y effects, so no difference of two large SSEs is taken.
 *
 * A significant F means the groups' slopes differ, so one adjusted group difference does not
 * describe the data (DOMAIN caution 7): report that plainly and defer to the statistician.
 * Weights, if given, fit both models by weighted least squares.
 *
 * Checked against Montgomery Example 15.5 (SAS slope-homogeneity F = 0.49, p = 0.6293, quoted by a
 * third party) and the cracker-promotion example (exact recomputation), and numpy on generated data.
 *
 * @throws {TypeError}/{RangeError} as `ancova` for bad input; also a RangeError naming the
 *   covariate and group when a covariate does not vary within a group (its slope there cannot be
 *   estimated), or when the separate-slopes model fits exactly or leaves no error df.
 * @example
 *   slopeHomogeneityTest({ outcome, group, covariates: { baseline } }); // { f, df1, df2, p, ... }
 */

export type SlopeHomogeneityResult = {
  f: number;
  df1: number;
  df2: number;
  p: number;
  interactionSS: number;
  commonSlopeError: { df: number; ss: number };
  separateSlopesError: { df: number; ss: number; ms: number };
  /** Slope of each covariate within each group, from the separate-slopes model. */
  groupSlopes: Array<{ group: GroupLabel; covariate: string; slope: number }>;
};

const FN = 'slopeHomogeneityTest';

/** See the module doc block. */
export function slopeHomogeneityTest(input: AncovaInput): SlopeHomogeneityResult {
  const d = prepareDesign(FN, input, true);
  const k = d.levels.length;
  const q = d.covariateNames.length;
  if (q === 0) throw new RangeError(`${FN}: covariates must name at least one covariate`);
  const df2 = d.nPositive - k * (1 + q);
  if (df2 < 1) {
    throw new RangeError(`${FN}: ${d.nPositive} observations leave no error df for the separate-slopes model (${k * (1 + q)} parameters)`);
  }
  const extra: Float64Array[] = [];
  const extraNames: string[] = [];
  const owners: Array<{ level: number; cov: number }> = [];
  d.covariateNames.forEach((name, j) => {
    const c = d.centred[j] as Float64Array;
    for (let g = 1; g < k; g++) {
      const col = new Float64Array(d.n);
      for (let i = 0; i < d.n; i++) if (d.levelIndex[i] === g) col[i] = c[i] as number;
      extra.push(col);
      extraNames.push(`group=${String(d.levels[g])} x ${name}`);
      owners.push({ level: g, cov: j });
    }
  });
  const common = fitDesign(FN, d);
  let separate: ReturnType<typeof fitDesign>;
  try {
    separate = fitDesign(FN, d, extra, extraNames);
  } catch (error) {
    // Find which group/covariate pair lacks spread, for a message that names it.
    for (let j = 0; j < q; j++) {
      for (let g = 0; g < k; g++) {
        let min = Infinity;
        let max = -Infinity;
        for (let i = 0; i < d.n; i++) {
          if (d.levelIndex[i] !== g || (d.weights !== undefined && (d.weights[i] as number) === 0)) continue;
          const v = d.centred[j]?.[i] as number;
          if (v < min) min = v;
          if (v > max) max = v;
        }
        if (max - min === 0) {
          throw new RangeError(
            `${FN}: covariates.${d.covariateNames[j] as string} does not vary within group ${JSON.stringify(d.levels[g])}, so its slope in that group cannot be estimated`,
          );
        }
      }
    }
    if (error instanceof CollinearColumnError || error instanceof RangeError) {
      throw new RangeError(`${FN}: the separate-slopes design is singular: ${error.message}`);
    }
    throw error;
  }
  const sf = separate.fit;
  const pSep = separate.p;
  let interactionSS = 0;
  for (let j = pSep - extra.length; j < pSep; j++) interactionSS += sf.sequentialSS[j] as number;
  const sseSep = sf.residualSS;
  const sseCommon = common.fit.residualSS;
  if (!(sseSep > 1e-20 * sseCommon)) {
    throw new RangeError(`${FN}: the separate-slopes model fits the outcome exactly (zero residual variance); F is undefined`);
  }
  const df1 = (k - 1) * q;
  const msSep = sseSep / df2;
  const f = interactionSS / df1 / msSep;
  const b = sf.coefficients;
  const groupSlopes: SlopeHomogeneityResult['groupSlopes'] = [];
  d.covariateNames.forEach((covariate, j) => {
    const base = b[k + j] as number;
    d.levels.forEach((group, g) => {
      const idx = owners.findIndex((o) => o.level === g && o.cov === j);
      const slope = idx < 0 ? base : base + (b[pSep - extra.length + idx] as number);
      groupSlopes.push({ group, covariate, slope });
    });
  });
  return {
    f,
    df1,
    df2,
    p: fCdfUpper(f, df1, df2),
    interactionSS,
    commonSlopeError: { df: common.fit.residualDf, ss: sseCommon },
    separateSlopesError: { df: df2, ss: sseSep, ms: msSep },
    groupSlopes,
  };
}
