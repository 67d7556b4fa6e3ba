import { describe, expect, it } from 'vitest';
import { expectClose, loadBalanceFixture } from '../../balanceTestSupport/balanceTestSupport.js';
import { ConvergenceError, logisticRegression, SeparationError } from '../logisticRegression.js';

type Case = { name: string; X: number[][]; y: number[]; coefficients: number[]; standardErrors: number[]; fitted: number[]; logLikelihood: number };
const fixture = loadBalanceFixture<{ cases: Case[] }>('logistic-regression.json');

describe('logisticRegression: cross-check against scipy.optimize maximum likelihood (fixture logistic-regression.json)', () => {
  for (const c of fixture.cases) {
    it(`matches scipy for ${c.name} (tolerance ${fixture.tolerance.relative} relative)`, () => {
      const fit = logisticRegression(c.X, c.y);
      expect(fit.converged).toBe(true);
      const input = { n: c.y.length, p: c.coefficients.length };
      c.coefficients.forEach((b, j) => expectClose(fit.coefficients[j] as number, b, fixture.tolerance, { case: c.name, quantity: `beta[${j}]`, input }));
      c.standardErrors.forEach((s, j) => expectClose(fit.standardErrors[j] as number, s, fixture.tolerance, { case: c.name, quantity: `se[${j}]`, input }));
      expectClose(fit.logLikelihood, c.logLikelihood, fixture.tolerance, { case: c.name, quantity: 'logLikelihood', input });
      for (const i of [0, 7, c.y.length - 1]) {
        expectClose(fit.fitted[i] as number, c.fitted[i] as number, fixture.tolerance, { case: c.name, quantity: `fitted[${i}]`, input });
      }
    });
  }
  it('gives the closed form for one binary covariate: log odds ratio and sqrt(1/a + 1/b + 1/c + 1/d)', () => {
    // 2x2 table: x=0: 3 events of 10; x=1: 6 of 8 (saturated model, textbook identity).
    const X: number[][] = [];
    const y: number[] = [];
    const add = (x: number, events: number, total: number) => {
      for (let i = 0; i < total; i++) {
        X.push([x]);
        y.push(i < events ? 1 : 0);
      }
    };
    add(0, 3, 10);
    add(1, 6, 8);
    const fit = logisticRegression(X, y, { names: ['exposed'] });
    expect(fit.names).toEqual(['(intercept)', 'exposed']);
    expect(fit.coefficients[0]).toBeCloseTo(Math.log(3 / 7), 10);
    expect(fit.coefficients[1]).toBeCloseTo(Math.log((6 / 2) / (3 / 7)), 10);
    expect(fit.standardErrors[1]).toBeCloseTo(Math.sqrt(1 / 3 + 1 / 7 + 1 / 6 + 1 / 2), 10);
  });
});

describe('logisticRegression: separation and convergence', () => {
  it('throws SeparationError for complete separation', () => {
    const X = [[-3], [-2], [-1], [-0.5], [0.5], [1], [2], [3]];
    const y = [0, 0, 0, 0, 1, 1, 1, 1];
    expect(() => logisticRegression(X, y)).toThrow(SeparationError);
    expect(() => logisticRegression(X, y)).toThrow(/complete or quasi-complete separation/);
  });
  it('throws SeparationError for quasi-complete separation (ties at the boundary)', () => {
    const X = [[-3], [-2], [-1], [0], [0], [0], [0], [1], [2], [3]];
    const y = [0, 0, 0, 0, 1, 0, 1, 1, 1, 1];
    expect(() => logisticRegression(X, y)).toThrow(SeparationError);
  });
  it('throws SeparationError when a binary covariate has no events in one level', () => {
    const X = [[0], [0], [0], [0], [1], [1], [1], [1], [1]];
    const y = [0, 0, 0, 0, 1, 0, 1, 1, 0];
    expect(() => logisticRegression(X, y)).toThrow(SeparationError);
  });
  it('throws ConvergenceError when the iteration limit is too low', () => {
    const c = fixture.cases[0] as Case;
    expect(() => logisticRegression(c.X, c.y, { maxIterations: 1 })).toThrow(ConvergenceError);
    expect(() => logisticRegression(c.X, c.y, { maxIterations: 1 })).toThrow(/did not converge in 1 iterations/);
  });
});

describe('logisticRegression: bad input', () => {
  const X = [[1], [2], [3], [4]];
  const y = [0, 1, 0, 1];
  it.each([
    ['X not an array', () => logisticRegression(5 as unknown as number[][], y), TypeError, /X must be an array/],
    ['empty X', () => logisticRegression([], []), RangeError, /X must not be empty/],
    ['ragged rows', () => logisticRegression([[1, 2], [3]], [0, 1]), RangeError, /X\[1\] has 1 columns but X\[0\] has 2/],
    ['NaN in X', () => logisticRegression([[1], [Number.NaN], [2], [3]], y), RangeError, /X\[1\]\[0\] \(x1\) must be a finite number/],
    ['y of the wrong length', () => logisticRegression(X, [0, 1]), RangeError, /y has length 2 but X has 4 rows/],
    ['y not binary', () => logisticRegression(X, [0, 1, 2, 1]), RangeError, /y\[2\] must be 0 or 1/],
    ['y all zero', () => logisticRegression(X, [0, 0, 0, 0]), RangeError, /y is all 0/],
    ['too few rows', () => logisticRegression([[1, 2], [2, 1]], [0, 1]), RangeError, /more rows are needed/],
    ['constant column', () => logisticRegression([[1, 5], [2, 5], [3, 5], [4, 5], [2, 5]], [0, 1, 0, 1, 1], { names: ['age', 'site'] }), RangeError, /column site is constant or collinear/],
    ['collinear column', () => logisticRegression([[1, 2], [2, 4], [3, 6], [4, 8], [2, 4]], [0, 1, 0, 1, 1], { names: ['a', 'b'] }), RangeError, /column b is constant or collinear/],
    ['names of the wrong length', () => logisticRegression(X, y, { names: ['a', 'b'] }), RangeError, /options.names has 2 entries but X has 1 columns/],
    ['bad maxIterations', () => logisticRegression(X, y, { maxIterations: 0 }), RangeError, /options.maxIterations must be at least 1/],
  ])('rejects %s', (_label, call, type, message) => {
    expect(call).toThrow(type);
    expect(call).toThrow(message);
  });
});
