/**
 * Input validation and design-matrix construction shared by `ancova` and
 * `slopeHomogeneityTest` (internal module).
 *
 * Design (column-major, n rows): intercept; one indicator per group level except the first
 * (reference coding; levels in order of first appearance); each covariate centred at its
 * (weighted) grand mean. Centring changes no test, SS or adjusted mean, but keeps the design
 * well conditioned and makes intercept + indicator the adjusted mean at the covariate means.
 */

export type GroupLabel = string | number;

export type AncovaInput = {
  outcome: ArrayLike<number>;
  group: ArrayLike<GroupLabel>;
  /** Default {} (no covariate). */
  covariates?: Record<string, ArrayLike<number>>;
  weights?: ArrayLike<number> | undefined;
};

export type PreparedDesign = {
  n: number;
  /** Rows with positive weight (all rows when unweighted). */
  nPositive: number;
  levels: GroupLabel[];
  /** Level index of each row. */
  levelIndex: Int32Array;
  levelCounts: number[];
  covariateNames: string[];
  covariateMeans: number[];
  /** Centred covariate columns. */
  centred: Float64Array[];
  outcome: Float64Array;
  weights: Float64Array | undefined;
};

function isArrayLike(v: unknown): v is ArrayLike<unknown> {
  return v !== null && typeof v === 'object' && typeof (v as { length?: unknown }).length === 'number';
}

function finiteColumn(fn: string, name: string, values: unknown, n: number | undefined): Float64Array {
  if (!isArrayLike(values)) throw new TypeError(`${fn}: ${name} must be an array of numbers`);
  if (n !== undefined && values.length !== n) {
    throw new RangeError(`${fn}: ${name} has length ${values.length} but outcome has length ${n}; they must match`);
  }
  const out = new Float64Array(values.length);
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (typeof v !== 'number') throw new TypeError(`${fn}: ${name}[${i}] must be a number, got ${typeof v}`);
    if (!Number.isFinite(v)) throw new RangeError(`${fn}: ${name}[${i}] must be finite, got ${String(v)}`);
    out[i] = v;
  }
  return out;
}

/** Two-pass (weighted) mean. */
export function weightedMean(values: Float64Array, weights: Float64Array | undefined): number {
  const n = values.length;
  let sw = 0;
  let s = 0;
  for (let i = 0; i < n; i++) {
    const w = weights === undefined ? 1 : (weights[i] as number);
    sw += w;
    s += w * (values[i] as number);
  }
  const m = s / sw;
  let c = 0;
  for (let i = 0; i < n; i++) {
    const w = weights === undefined ? 1 : (weights[i] as number);
    c += w * ((values[i] as number) - m);
  }
  return m + c / sw;
}

const KNOWN_KEYS = new Set(['outcome', 'group', 'covariates', 'weights']);

export function prepareDesign(fn: string, input: AncovaInput, allowWeights: boolean): PreparedDesign {
  if (input === null || typeof input !== 'object') throw new TypeError(`${fn}: input must be an object`);
  for (const key of Object.keys(input)) {
    if (!KNOWN_KEYS.has(key) || (key === 'weights' && !allowWeights)) {
      throw new RangeError(`${fn}: unknown option '${key}'`);
    }
  }
  const outcome = finiteColumn(fn, 'outcome', input.outcome, undefined);
  const n = outcome.length;
  if (n === 0) throw new RangeError(`${fn}: outcome must not be empty`);

  const group = input.group;
  if (!isArrayLike(group)) throw new TypeError(`${fn}: group must be an array of strings or numbers`);
  if (group.length !== n) {
    throw new RangeError(`${fn}: group has length ${group.length} but outcome has length ${n}; they must match`);
  }
  const levelOf = new Map<GroupLabel, number>();
  const levels: GroupLabel[] = [];
  const levelCounts: number[] = [];
  const levelIndex = new Int32Array(n);
  for (let i = 0; i < n; i++) {
    const g = group[i];
    if (typeof g === 'number') {
      if (!Number.isFinite(g)) throw new RangeError(`${fn}: group[${i}] must be a finite number or a string, got ${String(g)}`);
    } else if (typeof g !== 'string') {
      throw new TypeError(`${fn}: group[${i}] must be a string or a number, got ${g === null ? 'null' : typeof g}`);
    }
    let idx = levelOf.get(g);
    if (idx === undefined) {
      idx = levels.length;
      levelOf.set(g, idx);
      levels.push(g);
      levelCounts.push(0);
    }
    levelIndex[i] = idx;
  }

  let weights: Float64Array | undefined;
  if (input.weights !== undefined) {
    weights = finiteColumn(fn, 'weights', input.weights, n);
    for (let i = 0; i < n; i++) {
      if ((weights[i] as number) < 0) throw new RangeError(`${fn}: weights[${i}] must be non-negative, got ${weights[i]}`);
    }
  }
  let nPositive = 0;
  for (let i = 0; i < n; i++) {
    if (weights === undefined || (weights[i] as number) > 0) {
      nPositive++;
      const li = levelIndex[i] as number;
      levelCounts[li] = (levelCounts[li] as number) + 1;
    }
  }
  if (levels.length < 2) throw new RangeError(`${fn}: group needs at least 2 distinct levels, got ${levels.length}`);
  levels.forEach((lv, i) => {
    const c = levelCounts[i] as number;
    if (c < 2) {
      throw new RangeError(
        `${fn}: group level ${JSON.stringify(lv)} has ${c} observation(s)${weights ? ' with positive weight' : ''}; every level needs at least 2`,
      );
    }
  });

  // Omitted covariates mean none (the one-way ANOVA as an ANCOVA table).
  const covs = input.covariates === undefined ? {} : input.covariates;
  if (covs === null || typeof covs !== 'object' || Array.isArray(covs)) {
    throw new TypeError(`${fn}: covariates must be an object mapping names to arrays of numbers (use {} for none)`);
  }
  const covariateNames = Object.keys(covs);
  const centred: Float64Array[] = [];
  const covariateMeans: number[] = [];
  for (const name of covariateNames) {
    if (name === 'group') throw new RangeError(`${fn}: covariates must not use the name 'group' (it names the group term)`);
    const col = finiteColumn(fn, `covariates.${name}`, covs[name], n);
    const mean = weightedMean(col, weights);
    let spread = 0;
    for (let i = 0; i < n; i++) {
      col[i] = (col[i] as number) - mean;
      if (weights === undefined || (weights[i] as number) > 0) spread = Math.max(spread, Math.abs(col[i] as number));
    }
    if (spread === 0) throw new RangeError(`${fn}: covariates.${name} has zero variance (it is constant); it cannot adjust anything`);
    centred.push(col);
    covariateMeans.push(mean);
  }
  return { n, nPositive, levels, levelIndex, levelCounts, covariateNames, covariateMeans, centred, outcome, weights };
}

/** Intercept + level indicators (levels 2..k) + centred covariates + optional extra columns. */
export function buildDesign(d: PreparedDesign, extra: Float64Array[] = []): { x: Float64Array; p: number; names: string[] } {
  const { n, levels, levelIndex } = d;
  const k = levels.length;
  const p = 1 + (k - 1) + d.centred.length + extra.length;
  const x = new Float64Array(n * p);
  x.fill(1, 0, n);
  for (let i = 0; i < n; i++) {
    const li = levelIndex[i] as number;
    if (li > 0) x[li * n + i] = 1;
  }
  let col = k;
  for (const c of d.centred) x.set(c, n * col++);
  for (const c of extra) x.set(c, n * col++);
  const names = ['intercept', ...levels.slice(1).map((lv) => `group=${String(lv)}`), ...d.covariateNames];
  return { x, p, names };
}
