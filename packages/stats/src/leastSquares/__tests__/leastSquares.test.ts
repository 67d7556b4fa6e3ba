import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { CollinearColumnError, hc3Covariance, leastSquares, sequentialSSForOrder, typeThreeSS } from '../leastSquares.js';
import { expectDigits } from '../../referenceTestSupport/referenceTestSupport.js';

function columnMajor(cols: number[][]): Float64Array {
  const n = (cols[0] as number[]).length;
  const x = new Float64Array(n * cols.length);
  cols.forEach((c, j) => c.forEach((v, i) => (x[j * n + i] = v)));
  return x;
}

describe('leastSquares: algebraic identities (published formulas)', () => {
  const t = [0, 1, 2, 3, 4, 5, 6, 7];
  const z = [3, -1, 4, 1, -5, 9, 2, -6];
  const y = [1.2, 2.9, 5.1, 7.2, 8.8, 11.3, 12.9, 15.2];
  const x = columnMajor([t.map(() => 1), t, z]);
  const fit = leastSquares({ x, n: 8, p: 3, y, columnNames: ['intercept', 't', 'z'] });

  it('sequential SS sum to the model SS, and the residual SS completes y\'y (Pythagoras on Q\'y)', () => {
    const yy = y.reduce((s, v) => s + v * v, 0);
    const seq = Array.from(fit.sequentialSS).reduce((s, v) => s + v, 0);
    expectDigits('sum qty^2 + RSS = y\'y', seq + fit.residualSS, yy, 12);
  });

  it('Type III SS of a column equals the RSS increase when it is dropped (extra sum of squares)', () => {
    const reduced = leastSquares({ x: columnMajor([t.map(() => 1), t]), n: 8, p: 2, y });
    expectDigits('Type III SS(z)', typeThreeSS(fit, [2]), reduced.residualSS - fit.residualSS, 10);
    const reordered = sequentialSSForOrder(fit, [0, 2, 1]);
    expectDigits('Type III SS(t) via reorder', reordered[1] as number, typeThreeSS(fit, [1]), 12);
  });

  it('t-statistic squared of a single column equals its Type III F (b^2 / var(b) = SS / MSE)', () => {
    const b = fit.coefficients[2] as number;
    const se = fit.standardErrors[2] as number;
    const mse = fit.residualSS / fit.residualDf;
    expectDigits('t^2 = F', (b / se) ** 2, typeThreeSS(fit, [2]) / mse, 11);
  });

  it('integer weights equal replicating rows (weighted least squares)', () => {
    const w = [1, 2, 1, 3, 1, 1, 2, 1];
    const wfit = leastSquares({ x, n: 8, p: 3, y, weights: w });
    const rep = { t: [] as number[], z: [] as number[], y: [] as number[] };
    w.forEach((k, i) => {
      for (let r = 0; r < k; r++) {
        rep.t.push(t[i] as number);
        rep.z.push(z[i] as number);
        rep.y.push(y[i] as number);
      }
    });
    const m = rep.y.length;
    const rfit = leastSquares({ x: columnMajor([rep.t.map(() => 1), rep.t, rep.z]), n: m, p: 3, y: rep.y });
    for (let j = 0; j < 3; j++) expectDigits(`b${j}`, wfit.coefficients[j] as number, rfit.coefficients[j] as number, 11);
    expectDigits('weighted RSS', wfit.residualSS, rfit.residualSS, 11);
  });

  it('HC3 covariance matches the explicit sandwich formula on a tiny design', () => {
    const hc = hc3Covariance(fit, x);
    if (!hc.available) throw new Error(hc.reason);
    // explicit: (X'X)^-1 X' diag(e^2/(1-h)^2) X (X'X)^-1 with h_ii = x_i' (X'X)^-1 x_i
    const V = fit.unscaledCovariance;
    const p = 3;
    const n = 8;
    const meat = new Array<number>(9).fill(0);
    for (let i = 0; i < n; i++) {
      const xi = [1, t[i] as number, z[i] as number];
      let h = 0;
      for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) h += (xi[a] as number) * (V[a + b * p] as number) * (xi[b] as number);
      const e = fit.residuals[i] as number;
      const om = (e * e) / (1 - h) ** 2;
      for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) meat[a + b * p] = (meat[a + b * p] as number) + om * (xi[a] as number) * (xi[b] as number);
    }
    for (let a = 0; a < p; a++) {
      let s = 0;
      for (let k = 0; k < p; k++) for (let l = 0; l < p; l++) s += (V[a + k * p] as number) * (meat[k + l * p] as number) * (V[l + a * p] as number);
      expectDigits(`HC3 var(b${a})`, hc.covariance[a + a * p] as number, s, 10);
    }
  });

  it('property: coefficients do not depend on row order', () => {
    fc.assert(
      fc.property(fc.shuffledSubarray([0, 1, 2, 3, 4, 5, 6, 7], { minLength: 8, maxLength: 8 }), (perm) => {
        const px = columnMajor([perm.map(() => 1), perm.map((i) => t[i] as number), perm.map((i) => z[i] as number)]);
        const pf = leastSquares({ x: px, n: 8, p: 3, y: perm.map((i) => y[i] as number) });
        for (let j = 0; j < 3; j++) expectDigits(`b${j}`, pf.coefficients[j] as number, fit.coefficients[j] as number, 11);
        expectDigits('RSS', pf.residualSS, fit.residualSS, 11);
      }),
      { numRuns: 30 },
    );
  });
});

describe('leastSquares: rank deficiency names the collinear column', () => {
  it('a column equal to 2*t - 1 is named, with the columns it depends on', () => {
    const t = [0, 1, 2, 3, 4];
    const x = columnMajor([t.map(() => 1), t, t.map((v) => 2 * v - 1)]);
    let error: unknown;
    try {
      leastSquares({ x, n: 5, p: 3, y: [1, 2, 4, 3, 5], columnNames: ['intercept', 't', 'u'] });
    } catch (e) {
      error = e;
    }
    expect(error).toBeInstanceOf(CollinearColumnError);
    expect((error as CollinearColumnError).columnName).toBe('u');
    expect((error as Error).message).toMatch(/'u' is a linear combination of intercept, t/);
  });
  it('an all-zero column is named', () => {
    const x = columnMajor([[1, 1, 1], [0, 0, 0]]);
    expect(() => leastSquares({ x, n: 3, p: 2, y: [1, 2, 3], columnNames: ['one', 'zero'] })).toThrow(/'zero' is all zeros/);
  });
});

describe('leastSquares bad input', () => {
  const x = columnMajor([[1, 1, 1], [1, 2, 3]]);
  it('rejects wrong types, lengths, non-finite values, bad weights and unknown options', () => {
    expect(() => leastSquares({ x: [1, 2] as unknown as Float64Array, n: 2, p: 1, y: [1, 2] })).toThrow(TypeError);
    expect(() => leastSquares({ x, n: 3, p: 2, y: [1, 2] })).toThrow(/y has length 2 but x has 3 rows/);
    expect(() => leastSquares({ x, n: 3, p: 2, y: [1, Number.NaN, 3] })).toThrow(/y\[1\] must be a finite number/);
    expect(() => leastSquares({ x: columnMajor([[1, 1, 1], [1, Infinity, 3]]), n: 3, p: 2, y: [1, 2, 3] })).toThrow(/column 1, row 1/);
    expect(() => leastSquares({ x, n: 3, p: 2, y: [1, 2, 3], weights: [1, -1, 1] })).toThrow(/weights\[1\]/);
    expect(() => leastSquares({ x, n: 3, p: 2, y: [1, 2, 3], weights: [1, 1] })).toThrow(/weights has length 2/);
    expect(() => leastSquares({ x, n: 3, p: 2, y: [1, 2, 3], tolerance: 2 })).toThrow(/tolerance/);
    expect(() => leastSquares({ x, n: 3, p: 2, y: [1, 2, 3], refinementSteps: 1.5 })).toThrow(/refinementSteps/);
    expect(() => leastSquares({ x, n: 3, p: 2, y: [1, 2, 3], bogus: 1 } as never)).toThrow(/unknown option 'bogus'/);
    expect(() => leastSquares({ x: columnMajor([[1, 1], [1, 2]]), n: 2, p: 2, y: [1, 2] })).toThrow(/more observations/);
    expect(() => leastSquares({ x, n: 3, p: 2, y: [1, 2, 3], weights: [1, 0, 1] })).toThrow(/more observations/);
  });
  it('sequentialSSForOrder rejects an order that is not a permutation of the columns', () => {
    const fit = leastSquares({ x, n: 3, p: 2, y: [1, 2, 4] });
    expect(() => sequentialSSForOrder(fit, [0, 0])).toThrow(/order must be a permutation of 0..1/);
    expect(() => sequentialSSForOrder(fit, [0])).toThrow(RangeError);
    expect(() => sequentialSSForOrder(fit, [0, 2])).toThrow(RangeError);
  });
});
