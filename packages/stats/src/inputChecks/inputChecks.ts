/**
 * Internal input validation shared by the balance, propensity and allocation modules.
 *
 * Every message starts with `<function>: <argument>` so a caller can tell which input
 * was wrong and why. Convention: `TypeError` for a value of the wrong kind (not an
 * array, not a number), `RangeError` for a value of the right kind outside its domain
 * (empty, non-finite, negative weight, mismatched length, unknown option).
 */

export type NumericInput = ArrayLike<number>;

function describe(value: unknown): string {
  if (value === null) return 'null';
  if (Array.isArray(value)) return 'an array';
  return typeof value;
}

/** Throws TypeError unless `value` is an array or typed array of numbers (checked lazily, see below). */
export function assertArrayLike(fn: string, name: string, value: unknown): asserts value is ArrayLike<unknown> {
  if (
    value === null ||
    typeof value !== 'object' ||
    typeof (value as { length?: unknown }).length !== 'number'
  ) {
    throw new TypeError(`${fn}: ${name} must be an array or typed array of numbers, got ${describe(value)}`);
  }
}

/**
 * Finds the first entry that is not a finite number and throws for it. Called only when a
 * running sum came out non-finite, so the common path pays nothing for the check.
 */
export function throwFirstNonFinite(fn: string, name: string, values: ArrayLike<unknown>): never {
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (typeof v !== 'number') {
      throw new TypeError(`${fn}: ${name}[${i}] must be a number, got ${describe(v)}`);
    }
    if (!Number.isFinite(v)) {
      throw new RangeError(`${fn}: ${name}[${i}] must be finite, got ${String(v)}`);
    }
  }
  throw new RangeError(`${fn}: ${name} sums to a non-finite value (overflow); rescale the values`);
}

/**
 * Validates a numeric array: array-like, at least `minLength` entries, every entry a finite
 * number. Returns the sum (useful as the first pass of a two-pass mean).
 */
export function checkedSum(fn: string, name: string, values: unknown, minLength = 1, allowBooleans = false): number {
  assertArrayLike(fn, name, values);
  const n = values.length;
  if (n < minLength) {
    const need = minLength === 1 ? 'must not be empty' : `needs at least ${minLength} values`;
    throw new RangeError(`${fn}: ${name} ${need}, got ${n}`);
  }
  const xs = values as ArrayLike<number>;
  let s = 0;
  for (let i = 0; i < n; i++) s += xs[i] as number;
  // A NaN, an Infinity or a non-number (string concatenation, undefined) all leave `s` non-finite.
  if (typeof s !== 'number' || !Number.isFinite(s)) throwFirstNonFinite(fn, name, xs);
  // null and booleans add as 0/1 without a trace: look for them (typed arrays cannot hold them).
  if (!ArrayBuffer.isView(values)) checkAllNumbers(fn, name, values, allowBooleans);
  return s;
}

/** Throws TypeError for the first entry that is not a number (booleans allowed when asked). */
function checkAllNumbers(fn: string, name: string, values: ArrayLike<unknown>, allowBooleans: boolean): void {
  for (let i = 0; i < values.length; i++) {
    const t = typeof values[i];
    if (t !== 'number' && !(allowBooleans && t === 'boolean')) {
      throw new TypeError(`${fn}: ${name}[${i}] must be a number, got ${describe(values[i])}`);
    }
  }
}

export type WeightSums = { sum: number; sumSquares: number };

/**
 * Validates weights: same length as the values they weight, finite, non-negative and not all
 * zero. Returns sum(w) and sum(w^2) (the latter is needed by the Austin & Stuart variance).
 */
export function checkedWeights(fn: string, name: string, weights: unknown, expectedLength: number, valuesName: string): WeightSums {
  assertArrayLike(fn, name, weights);
  if (weights.length !== expectedLength) {
    throw new RangeError(
      `${fn}: ${name} has length ${weights.length} but ${valuesName} has length ${expectedLength}; they must match`,
    );
  }
  const ws = weights as ArrayLike<number>;
  let s = 0;
  let s2 = 0;
  let negative = -1;
  for (let i = 0; i < expectedLength; i++) {
    const w = ws[i] as number;
    s += w;
    s2 += w * w;
    if (w < 0 && negative < 0) negative = i;
  }
  if (typeof s !== 'number' || !Number.isFinite(s) || !Number.isFinite(s2)) throwFirstNonFinite(fn, name, ws);
  if (!ArrayBuffer.isView(weights)) checkAllNumbers(fn, name, ws, false);
  if (negative >= 0) {
    throw new RangeError(`${fn}: ${name}[${negative}] must be non-negative, got ${String(ws[negative])}`);
  }
  if (s <= 0) throw new RangeError(`${fn}: ${name} are all zero; at least one weight must be positive`);
  return { sum: s, sumSquares: s2 };
}

/** Throws unless every entry is exactly 0 or 1 (booleans are accepted too). */
export function checkBinary(fn: string, name: string, values: ArrayLike<unknown>): void {
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (v !== 0 && v !== 1 && v !== true && v !== false) {
      throw new RangeError(`${fn}: ${name}[${i}] must be 0 or 1 for a binary covariate, got ${String(v)}`);
    }
  }
}

/** Throws RangeError unless `value` is one of `allowed`. */
export function checkOption<T extends string>(fn: string, name: string, value: unknown, allowed: readonly T[]): T {
  if (typeof value !== 'string' || !(allowed as readonly string[]).includes(value)) {
    throw new RangeError(
      `${fn}: ${name} must be one of ${allowed.map((a) => `'${a}'`).join(', ')}, got ${JSON.stringify(value) ?? String(value)}`,
    );
  }
  return value as T;
}

/** Throws unless `value` is a finite number (optionally an integer) within [min, max]. */
export function checkNumber(
  fn: string,
  name: string,
  value: unknown,
  opts: { min?: number; max?: number; integer?: boolean; exclusiveMin?: boolean; exclusiveMax?: boolean } = {},
): number {
  if (typeof value !== 'number') throw new TypeError(`${fn}: ${name} must be a number, got ${describe(value)}`);
  if (!Number.isFinite(value)) throw new RangeError(`${fn}: ${name} must be finite, got ${String(value)}`);
  if (opts.integer && !Number.isInteger(value)) throw new RangeError(`${fn}: ${name} must be an integer, got ${value}`);
  const { min, max } = opts;
  if (min !== undefined && (opts.exclusiveMin ? value <= min : value < min)) {
    throw new RangeError(`${fn}: ${name} must be ${opts.exclusiveMin ? 'greater than' : 'at least'} ${min}, got ${value}`);
  }
  if (max !== undefined && (opts.exclusiveMax ? value >= max : value > max)) {
    throw new RangeError(`${fn}: ${name} must be ${opts.exclusiveMax ? 'less than' : 'at most'} ${max}, got ${value}`);
  }
  return value;
}

export type CountTable = {
  rows: number;
  columns: number;
  rowTotals: number[];
  columnTotals: number[];
  total: number;
};

/**
 * Validates a contingency table of counts: an array of at least 2 rows, each an array of the
 * same length (at least 2), every entry a non-negative integer, and no row or column summing
 * to zero (its expected counts would be 0; the caller drops such a level). Returns the margins.
 */
export function checkCountTable(fn: string, name: string, table: unknown): CountTable {
  if (!Array.isArray(table)) throw new TypeError(`${fn}: ${name} must be an array of rows of counts, got ${describe(table)}`);
  if (table.length < 2) throw new RangeError(`${fn}: ${name} needs at least 2 rows, got ${table.length}`);
  let columns = -1;
  const rowTotals: number[] = [];
  table.forEach((row: unknown, i) => {
    if (!Array.isArray(row)) throw new TypeError(`${fn}: ${name}[${i}] must be an array of counts, got ${describe(row)}`);
    if (columns < 0) {
      columns = row.length;
      if (columns < 2) throw new RangeError(`${fn}: ${name} needs at least 2 columns, got ${columns}`);
    } else if (row.length !== columns) {
      throw new RangeError(`${fn}: ${name}[${i}] has ${row.length} entries but ${name}[0] has ${columns}; rows must have equal length`);
    }
    let s = 0;
    row.forEach((v: unknown, j) => {
      if (typeof v !== 'number') throw new TypeError(`${fn}: ${name}[${i}][${j}] must be a number, got ${describe(v)}`);
      if (!Number.isInteger(v) || v < 0) {
        throw new RangeError(`${fn}: ${name}[${i}][${j}] must be a non-negative integer count, got ${String(v)}`);
      }
      s += v;
    });
    rowTotals.push(s);
  });
  const rows = table as number[][];
  const columnTotals = Array.from({ length: columns }, (_, j) => rows.reduce((s, r) => s + (r[j] as number), 0));
  const total = rowTotals.reduce((a, b) => a + b, 0);
  if (!Number.isSafeInteger(total)) throw new RangeError(`${fn}: ${name} total ${total} is beyond exact integer range`);
  rowTotals.forEach((t, i) => {
    if (t === 0) throw new RangeError(`${fn}: ${name}[${i}] sums to 0; drop empty rows before testing (their expected counts are 0)`);
  });
  columnTotals.forEach((t, j) => {
    if (t === 0) throw new RangeError(`${fn}: ${name} column ${j} sums to 0; drop empty columns before testing (their expected counts are 0)`);
  });
  return { rows: rows.length, columns, rowTotals, columnTotals, total };
}
