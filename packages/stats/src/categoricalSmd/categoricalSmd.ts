import { assertArrayLike, checkedWeights } from '../inputChecks/inputChecks.js';
import { readArmWeights, type ArmWeights } from '../varianceRatio/varianceRatio.js';

export type Level = string | number;

export type CategoricalSmdResult = number;

const FN = 'categoricalSmd';

/**
 * Mahalanobis-type standardized difference for a categorical covariate with K levels
 * (Yang & Dalton, SAS Global Forum 2012, paper 335), optionally weighted.
 *
 * Let p_T and p_C be the vectors of the (weighted) proportions of the first K - 1 levels in each
 * arm (one level, the first in sorted order, is left out because the K proportions sum to 1).
 * For one participant the level indicators e_k are multinomial with
 *   Var(e_k) = p_k (1 - p_k),   Cov(e_k, e_l) = -p_k p_l   (k != l),
 * since E[e_k e_l] = 0 for k != l. So, with S_T and S_C these matrices in each arm,
 *   S = (S_T + S_C) / 2
 *   S_kk = [p_Tk (1 - p_Tk) + p_Ck (1 - p_Ck)] / 2
 *   S_kl = -[p_Tk p_Tl + p_Ck p_Cl] / 2          (k != l)
 *   d = sqrt( (p_T - p_C)' S^{-1} (p_T - p_C) )
 * Note the minus sign on the off-diagonal terms: the form commonly reproduced from the 2012
 * paper prints them as +[p_Tk p_Tl + p_Ck p_Cl] / 2 (recalled from memory), which is not a
 * multinomial covariance and does not reduce to the binary SMD.
 *
 * Properties (tested): with K = 2 it equals |binary SMD| (Austin 2009); it does not depend on
 * which level is left out (dropping another level is an invertible linear map of p, and a
 * Mahalanobis distance is invariant under such maps); it is always >= 0.
 *
 * Weights: `{ treated?, control? }` or a pair `[treated, control]`, each the same length as
 * that arm's levels (the same shape as `varianceRatio`); proportions become sum(w [level = k]) / sum(w), as for the
 * weighted binary SMD of Austin & Stuart (Stat Med 2015;34:3661).
 *
 * Levels are strings or finite numbers compared with ===; missing values must be removed (or
 * coded as their own level) before calling.
 *
 * @throws {TypeError} an input is not an array, or a level is neither a string nor a number.
 * @throws {RangeError} an arm is empty; a numeric level is not finite; weights are invalid or of
 *   the wrong length; every participant has the same level (zero variance); or S is singular,
 *   which happens when the arms' levels do not overlap enough for the difference to be scaled.
 * @example
 * categoricalSmd(['a', 'b', 'c', 'a'], ['b', 'b', 'c', 'a']); // 0.6030... (sqrt(0.0625 * 0.1875 / 0.0322265625))
 */
export function categoricalSmd(
  levelsTreated: ArrayLike<Level>,
  levelsControl: ArrayLike<Level>,
  weights?: ArmWeights | [ArrayLike<number> | undefined, ArrayLike<number> | undefined],
): CategoricalSmdResult {
  const w = readArmWeights(FN, weights);
  const tTotals = levelTotals('levelsTreated', levelsTreated, w?.treated, 'weights.treated');
  const cTotals = levelTotals('levelsControl', levelsControl, w?.control, 'weights.control');
  const levels = sortLevels([...new Set([...tTotals.byLevel.keys(), ...cTotals.byLevel.keys()])]);
  if (levels.length < 2) {
    throw new RangeError(
      `${FN}: every participant in both arms has the same level (${String(levels[0])}), so the SMD is undefined`,
    );
  }
  const kept = levels.slice(1);
  const k = kept.length;
  const pT = kept.map((l) => (tTotals.byLevel.get(l) ?? 0) / tTotals.total);
  const pC = kept.map((l) => (cTotals.byLevel.get(l) ?? 0) / cTotals.total);
  const s: number[][] = [];
  for (let i = 0; i < k; i++) {
    const row: number[] = [];
    for (let j = 0; j < k; j++) {
      const ti = pT[i] as number;
      const ci = pC[i] as number;
      const tj = pT[j] as number;
      const cj = pC[j] as number;
      row.push(i === j ? (ti * (1 - ti) + ci * (1 - ci)) / 2 : -(ti * tj + ci * cj) / 2);
    }
    s.push(row);
  }
  const diff = pT.map((t, i) => t - (pC[i] as number));
  const q = quadraticFormInverse(s, diff);
  return Math.sqrt(q < 0 ? 0 : q);
}

function levelTotals(
  name: string,
  levels: unknown,
  weights: ArrayLike<number> | undefined,
  weightsName: string,
): { byLevel: Map<Level, number>; total: number } {
  assertArrayLike(FN, name, levels);
  const n = levels.length;
  if (n === 0) throw new RangeError(`${FN}: ${name} must not be empty, got 0`);
  const total = weights === undefined ? n : checkedWeights(FN, weightsName, weights, n, name).sum;
  const byLevel = new Map<Level, number>();
  for (let i = 0; i < n; i++) {
    const l = levels[i];
    if (typeof l === 'number') {
      if (!Number.isFinite(l)) throw new RangeError(`${FN}: ${name}[${i}] must be a finite number or a string, got ${l}`);
    } else if (typeof l !== 'string') {
      throw new TypeError(`${FN}: ${name}[${i}] must be a string or a number, got ${l === null ? 'null' : typeof l}`);
    }
    const w = weights === undefined ? 1 : (weights[i] as number);
    byLevel.set(l, (byLevel.get(l) ?? 0) + w);
  }
  // A level carried only by zero-weight rows is absent after weighting.
  for (const [l, w] of byLevel) if (w === 0) byLevel.delete(l);
  return { byLevel, total };
}

/** Numbers first in numeric order, then strings in code-unit order: deterministic, locale-free. */
function sortLevels(levels: Level[]): Level[] {
  return levels.sort((a, b) => {
    if (typeof a === 'number' && typeof b === 'number') return a - b;
    if (typeof a === 'number') return -1;
    if (typeof b === 'number') return 1;
    return a < b ? -1 : a > b ? 1 : 0;
  });
}

/**
 * v' S^{-1} v through a Cholesky factorisation of the small symmetric matrix S (never an
 * explicit inverse). A pivot that is not clearly positive means S is singular.
 */
function quadraticFormInverse(s: number[][], v: number[]): number {
  const k = v.length;
  const l: number[][] = s.map(() => new Array<number>(k).fill(0));
  const scale = Math.max(...s.map((row, i) => row[i] as number));
  for (let j = 0; j < k; j++) {
    const lj = l[j] as number[];
    let d = (s[j] as number[])[j] as number;
    for (let m = 0; m < j; m++) d -= (lj[m] as number) ** 2;
    if (!(d > 1e-12 * scale)) {
      throw new RangeError(
        `${FN}: the pooled covariance of the level proportions is singular (the arms' levels barely overlap), so the Mahalanobis SMD is undefined; compare the level proportions directly`,
      );
    }
    lj[j] = Math.sqrt(d);
    for (let i = j + 1; i < k; i++) {
      const li = l[i] as number[];
      let x = (s[i] as number[])[j] as number;
      for (let m = 0; m < j; m++) x -= (li[m] as number) * (lj[m] as number);
      li[j] = x / (lj[j] as number);
    }
  }
  // Solve L y = v; then v' S^{-1} v = y'y.
  let q = 0;
  const y = new Array<number>(k).fill(0);
  for (let i = 0; i < k; i++) {
    const li = l[i] as number[];
    let x = v[i] as number;
    for (let m = 0; m < i; m++) x -= (li[m] as number) * (y[m] as number);
    const yi = x / (li[i] as number);
    y[i] = yi;
    q += yi * yi;
  }
  return q;
}
