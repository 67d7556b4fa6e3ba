import { Matrix, QrDecomposition } from 'ml-matrix';
import { assertArrayLike, checkBinary, checkNumber } from '../inputChecks/inputChecks.js';

export type LogisticOptions = {
  /** Add an intercept column (default true). Set false if X already has one. */
  intercept?: boolean;
  /** Column names for messages and output (without the intercept). */
  names?: string[];
  /** Maximum IRLS iterations (default 50). */
  maxIterations?: number;
  /** Convergence tolerance on the relative change in deviance (default 1e-10). */
  tolerance?: number;
};

export type LogisticResult = {
  /** Intercept first when `intercept` is true, then one per X column. */
  coefficients: number[];
  standardErrors: number[];
  names: string[];
  /** Fitted probabilities, one per row. */
  fitted: number[];
  linearPredictor: number[];
  logLikelihood: number;
  deviance: number;
  iterations: number;
  /** Always true: a fit that does not converge throws instead of returning. */
  converged: true;
  method: 'IRLS (Fisher scoring), weighted least squares by QR';
};

/** The maximum-likelihood estimate does not exist: a combination of X separates y. */
export class SeparationError extends RangeError {
  readonly code = 'LOGISTIC_SEPARATION';
  constructor(
    message: string,
    readonly rowsAtBoundary: number,
  ) {
    super(message);
    this.name = 'SeparationError';
  }
}

/** IRLS did not converge within maxIterations (and no separation was detected). */
export class ConvergenceError extends Error {
  readonly code = 'LOGISTIC_NO_CONVERGENCE';
  constructor(message: string) {
    super(message);
    this.name = 'ConvergenceError';
  }
}

const FN = 'logisticRegression';
/** |eta| beyond this means a fitted probability within ~3e-7 of 0 or 1 while coefficients still grow. */
const BOUNDARY_ETA = 15;

/**
 * Logistic regression by iteratively reweighted least squares (IRLS; McCullagh & Nelder,
 * Generalized Linear Models, 2nd ed. 1989, section 4.4), e.g. for propensity scores.
 *
 * Model: logit P(y = 1 | x) = x' beta. Each iteration, with mu = 1 / (1 + exp(-eta)),
 * w = mu (1 - mu) and working response z = eta + (y - mu) / w, solves the weighted least squares
 * problem min || sqrt(w) (z - X beta) || through a QR decomposition (ml-matrix), never by
 * inverting X'WX. Start: mu = (y + 0.5) / 2 (as R's glm does for the binomial family).
 * Converged when |dev - dev_prev| / (|dev| + 0.1) < tolerance and the largest relative
 * coefficient change is below 1e-8. Standard errors: sqrt(diag((X'WX)^{-1})) = rows of R^{-1}.
 *
 * Separation (Albert & Anderson, Biometrika 1984;71:1): if some combination of the covariates
 * predicts y perfectly (complete) or perfectly up to ties (quasi-complete), the MLE does not exist
 * and the coefficients run off to infinity. Detected when the iterations do not converge and some
 * fitted linear predictors exceed |eta| = 15 with every such row correctly classified, or when a
 * "converged" fit has |eta| > 30 (fitted probability numerically 0 or 1). A `SeparationError`
 * is thrown: drop or merge the offending covariate, or use a penalised method.
 *
 * @throws {TypeError} X is not an array of rows; y is not an array.
 * @throws {RangeError} no rows; rows of unequal length; a non-finite value; y not 0/1 or of the
 *   wrong length; only one outcome present; fewer rows than coefficients; a column that is
 *   constant or collinear with earlier ones (named); an invalid option.
 * @throws {SeparationError} (a RangeError) complete or quasi-complete separation.
 * @throws {ConvergenceError} no convergence within maxIterations.
 * @example
 * const fit = logisticRegression([[0.5], [1.2], [-0.3], [2.2], [0.1], [-1.4]], [0, 1, 1, 1, 0, 0]);
 * fit.coefficients; // [intercept, slope]
 */
export function logisticRegression(X: ArrayLike<ArrayLike<number>>, y: ArrayLike<number>, options: LogisticOptions = {}): LogisticResult {
  const intercept = options.intercept ?? true;
  const maxIterations = checkNumber(FN, 'options.maxIterations', options.maxIterations ?? 50, { min: 1, integer: true });
  const tolerance = checkNumber(FN, 'options.tolerance', options.tolerance ?? 1e-10, { min: 0, exclusiveMin: true });
  const { design, names } = buildDesign(X, intercept, options.names);
  const n = design.rows;
  const p = design.columns;
  assertArrayLike(FN, 'y', y);
  if (y.length !== n) throw new RangeError(`${FN}: y has length ${y.length} but X has ${n} rows; they must match`);
  checkBinary(FN, 'y', y);
  const yy = Float64Array.from(y as ArrayLike<number>, Number);
  let ones = 0;
  for (let i = 0; i < n; i++) ones += yy[i] as number;
  if (ones === 0 || ones === n) {
    throw new SeparationError(`${FN}: y is ${ones === 0 ? 'all 0' : 'all 1'}; both outcomes are needed for a logistic fit`, n);
  }
  if (n <= p) throw new RangeError(`${FN}: X has ${n} rows but the model has ${p} coefficients; more rows are needed`);
  checkFullRank(design, names);

  const eta = new Float64Array(n);
  const mu = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const m = ((yy[i] as number) + 0.5) / 2;
    mu[i] = m;
    eta[i] = Math.log(m / (1 - m));
  }
  let beta: Float64Array = new Float64Array(p);
  let dev = Number.POSITIVE_INFINITY;
  let converged = false;
  let iterations = 0;
  while (iterations < maxIterations) {
    iterations++;
    const { beta: next } = weightedLeastSquares(design, yy, eta, mu);
    updatePredictor(design, next, eta, mu);
    const newDev = deviance(yy, eta);
    let coefChange = 0;
    for (let j = 0; j < p; j++) {
      const b = next[j] as number;
      coefChange = Math.max(coefChange, Math.abs(b - (beta[j] as number)) / (Math.abs(b) + 0.1));
    }
    beta = next;
    const devChange = Math.abs(newDev - dev) / (Math.abs(newDev) + 0.1);
    dev = newDev;
    if (devChange < tolerance && coefChange < 1e-8) {
      converged = true;
      break;
    }
  }
  const boundary = boundaryRows(yy, eta);
  if (!converged) {
    if (boundary.count > 0 && boundary.allCorrect) throw separationError(boundary.count);
    throw new ConvergenceError(
      `${FN}: IRLS did not converge in ${maxIterations} iterations (last deviance ${dev}); check for extreme covariate values or raise options.maxIterations`,
    );
  }
  if (boundary.maxAbsEta > 30) throw separationError(boundary.count);
  // Final standard errors use the weights at the converged estimate.
  const { r } = weightedLeastSquares(design, yy, eta, mu);
  const se = standardErrors(r);
  return {
    coefficients: Array.from(beta),
    standardErrors: se,
    names,
    fitted: Array.from(mu),
    linearPredictor: Array.from(eta),
    logLikelihood: -dev / 2,
    deviance: dev,
    iterations,
    converged: true,
    method: 'IRLS (Fisher scoring), weighted least squares by QR',
  };
}

function separationError(count: number): SeparationError {
  return new SeparationError(
    `${FN}: complete or quasi-complete separation: ${count} row(s) have fitted probabilities numerically 0 or 1 and the coefficients diverge, so the maximum-likelihood estimate does not exist; remove or merge the covariate that predicts the outcome perfectly`,
    count,
  );
}

function buildDesign(X: unknown, intercept: boolean, names: string[] | undefined): { design: Matrix; names: string[] } {
  assertArrayLike(FN, 'X', X);
  const rows = X as ArrayLike<unknown>;
  const n = rows.length;
  if (n === 0) throw new RangeError(`${FN}: X must not be empty, got 0 rows`);
  const first = rows[0];
  assertArrayLike(FN, 'X[0]', first);
  const k = first.length;
  if (names !== undefined && names.length !== k) {
    throw new RangeError(`${FN}: options.names has ${names.length} entries but X has ${k} columns`);
  }
  const colNames = names ?? Array.from({ length: k }, (_, j) => `x${j + 1}`);
  const p = k + (intercept ? 1 : 0);
  if (p === 0) throw new RangeError(`${FN}: X has no columns and intercept is false; nothing to fit`);
  const m = new Matrix(n, p);
  for (let i = 0; i < n; i++) {
    const row = rows[i];
    assertArrayLike(FN, `X[${i}]`, row);
    if (row.length !== k) throw new RangeError(`${FN}: X[${i}] has ${row.length} columns but X[0] has ${k}`);
    let c = 0;
    if (intercept) m.set(i, c++, 1);
    for (let j = 0; j < k; j++) {
      const v = row[j];
      if (typeof v !== 'number' || !Number.isFinite(v)) {
        throw new RangeError(`${FN}: X[${i}][${j}] (${colNames[j]}) must be a finite number, got ${String(v)}`);
      }
      m.set(i, c++, v);
    }
  }
  return { design: m, names: intercept ? ['(intercept)', ...colNames] : colNames };
}

/**
 * Index of the first column whose R_jj is negligible relative to the column's own length (the
 * column is, numerically, a combination of the columns before it); -1 when of full rank.
 */
function firstDeficientColumn(a: Matrix, r: Matrix): number {
  for (let j = 0; j < a.columns; j++) {
    let norm = 0;
    for (let i = 0; i < a.rows; i++) norm += a.get(i, j) ** 2;
    norm = Math.sqrt(norm);
    if (norm === 0 || !(Math.abs(r.get(j, j)) > 1e-10 * norm)) return j;
  }
  return -1;
}

function checkFullRank(design: Matrix, names: string[]): void {
  const j = firstDeficientColumn(design, new QrDecomposition(design).upperTriangularMatrix);
  if (j < 0) return;
  let allZero = true;
  for (let i = 0; i < design.rows; i++) if (design.get(i, j) !== 0) allZero = false;
  const what = allZero
    ? 'is all zero'
    : names[0] === '(intercept)' && j > 0
      ? 'is constant or collinear with earlier columns'
      : 'is collinear with earlier columns';
  throw new RangeError(`${FN}: column ${names[j]} ${what}; the design is singular, remove it`);
}

function weightedLeastSquares(
  design: Matrix,
  y: Float64Array,
  eta: Float64Array,
  mu: Float64Array,
): { beta: Float64Array; r: Matrix } {
  const n = design.rows;
  const p = design.columns;
  const a = new Matrix(n, p);
  const b = new Matrix(n, 1);
  for (let i = 0; i < n; i++) {
    const m = mu[i] as number;
    const q = sigmoid(-(eta[i] as number)); // 1 - mu without cancellation
    const w = m * q;
    const sw = Math.sqrt(w);
    // z = eta + (y - mu) / w, written so that it stays finite as mu -> 0 or 1.
    const z = (eta[i] as number) + ((y[i] as number) === 1 ? 1 / m : -1 / q);
    for (let j = 0; j < p; j++) a.set(i, j, sw * design.get(i, j));
    b.set(i, 0, sw * z);
  }
  const qr = new QrDecomposition(a);
  const r = qr.upperTriangularMatrix;
  // The unweighted design was checked for collinearity up front, so a rank drop here comes from
  // weights collapsing to 0 on rows fitted at probability 0 or 1: separation.
  if (firstDeficientColumn(a, r) >= 0) throw separationError(boundaryRows(y, eta).count);
  const sol = qr.solve(b);
  const beta = new Float64Array(p);
  for (let j = 0; j < p; j++) beta[j] = sol.get(j, 0);
  return { beta, r };
}

function updatePredictor(design: Matrix, beta: Float64Array, eta: Float64Array, mu: Float64Array): void {
  const n = design.rows;
  const p = design.columns;
  for (let i = 0; i < n; i++) {
    let e = 0;
    for (let j = 0; j < p; j++) e += design.get(i, j) * (beta[j] as number);
    eta[i] = e;
    mu[i] = sigmoid(e);
  }
}

function sigmoid(x: number): number {
  return x >= 0 ? 1 / (1 + Math.exp(-x)) : Math.exp(x) / (1 + Math.exp(x));
}

/** log(1 + e^x) without overflow. */
function softplus(x: number): number {
  return x > 0 ? x + Math.log1p(Math.exp(-x)) : Math.log1p(Math.exp(x));
}

/** -2 log L = 2 sum [y softplus(-eta) + (1 - y) softplus(eta)]. */
function deviance(y: Float64Array, eta: Float64Array): number {
  let d = 0;
  for (let i = 0; i < y.length; i++) {
    const e = eta[i] as number;
    d += (y[i] as number) === 1 ? softplus(-e) : softplus(e);
  }
  return 2 * d;
}

function boundaryRows(y: Float64Array, eta: Float64Array): { count: number; allCorrect: boolean; maxAbsEta: number } {
  let count = 0;
  let allCorrect = true;
  let maxAbsEta = 0;
  for (let i = 0; i < y.length; i++) {
    const e = eta[i] as number;
    maxAbsEta = Math.max(maxAbsEta, Math.abs(e));
    if (Math.abs(e) > BOUNDARY_ETA) {
      count++;
      if ((e > 0) !== ((y[i] as number) === 1)) allCorrect = false;
    }
  }
  return { count, allCorrect, maxAbsEta };
}

/** sqrt(diag((R'R)^{-1})): row norms of R^{-1}, by back-substitution on the triangular R. */
function standardErrors(r: Matrix): number[] {
  const p = r.columns;
  const inv: number[][] = Array.from({ length: p }, () => new Array<number>(p).fill(0));
  for (let col = 0; col < p; col++) {
    for (let i = p - 1; i >= 0; i--) {
      let s = i === col ? 1 : 0;
      for (let k = i + 1; k < p; k++) s -= r.get(i, k) * ((inv[k] as number[])[col] as number);
      (inv[i] as number[])[col] = s / r.get(i, i);
    }
  }
  return inv.map((row) => Math.sqrt(row.reduce((acc, v) => acc + v * v, 0)));
}
