import { describe, expect, it } from 'vitest';
import { baselineTableSchema, type BaselineTable } from '@counterpoise/contracts/balance';
import { formatP, pValueRows } from './pvalue-rows.js';

const A = '00000000-0000-4000-8000-000000000001';
const B = '00000000-0000-4000-8000-000000000002';
const C = '00000000-0000-4000-8000-000000000003';
const ONE_LEVEL =
  'Not computed: everyone with a recorded value in these two arms has the same level (yes), so there is nothing to compare.';

function table(values: NonNullable<BaselineTable['pValues']>['values']): BaselineTable {
  return baselineTableSchema.parse({
    freshness: { computedAt: null, recomputePending: false, enrolledCount: null },
    scope: { siteId: null },
    columns: [
      { column: A, label: 'A (Usual care)', n: 40 },
      { column: B, label: 'B (Walking)', n: 41 },
      { column: C, label: 'C (Cycling)', n: 39 },
      { column: 'overall', label: 'Overall', n: 120 },
    ],
    rows: [
      { covariateKey: 'smoker', label: 'Smoker', statistic: 'level', level: 'yes', cells: [] },
      { covariateKey: 'diabetic', label: 'Diabetic', statistic: 'level', level: 'yes', cells: [] },
    ],
    pValues: { caution: 'CONSORT', method: 'm', values },
    cautions: [],
  });
}

describe('pValueRows', () => {
  it('names the comparison and the test, and gives each distinct note one footnote number', () => {
    const { rows, notes } = pValueRows(
      table([
        {
          covariateKey: 'smoker',
          armId: B,
          referenceArmId: A,
          pValue: 0.41234,
          test: 'Pearson chi-square test (1 df)',
          note: null,
        },
        {
          covariateKey: 'smoker',
          armId: C,
          referenceArmId: A,
          pValue: 0.0004,
          test: "Fisher's exact test (two-sided)",
          note: 'An expected count is below 5.',
        },
        {
          covariateKey: 'diabetic',
          armId: B,
          referenceArmId: A,
          pValue: null,
          test: 'none',
          note: ONE_LEVEL,
        },
        {
          covariateKey: 'diabetic',
          armId: C,
          referenceArmId: A,
          pValue: null,
          test: 'none',
          note: ONE_LEVEL,
        },
      ]),
    );
    expect(rows.map((r) => [r.label, r.comparison, r.test, r.p, r.marker])).toEqual([
      ['Smoker', 'B (Walking) vs A (Usual care)', 'Pearson chi-square test (1 df)', '0.412', null],
      ['Smoker', 'C (Cycling) vs A (Usual care)', "Fisher's exact test (two-sided)", '< 0.001', 1],
      ['Diabetic', 'B (Walking) vs A (Usual care)', '—', 'not computed', 2],
      ['Diabetic', 'C (Cycling) vs A (Usual care)', '—', 'not computed', 2],
    ]);
    expect(notes).toEqual([
      { marker: 1, text: 'An expected count is below 5.' },
      { marker: 2, text: ONE_LEVEL },
    ]);
    expect(rows[2]!.note).toBe(ONE_LEVEL);
    expect(pValueRows(table([])).singleComparison).toBeNull();
  });

  it('with one comparison only (two arms), names it once instead of in every row', () => {
    const two = pValueRows(
      table([
        {
          covariateKey: 'smoker',
          armId: B,
          referenceArmId: A,
          pValue: 0.5,
          test: 'Pearson chi-square test (1 df)',
          note: null,
        },
        {
          covariateKey: 'diabetic',
          armId: B,
          referenceArmId: A,
          pValue: 0.7,
          test: 'Pearson chi-square test (1 df)',
          note: null,
        },
      ]),
    );
    expect(two.singleComparison).toBe('B (Walking) vs A (Usual care)');
    const three = pValueRows(
      table([
        {
          covariateKey: 'smoker',
          armId: B,
          referenceArmId: A,
          pValue: 0.5,
          test: 'Pearson chi-square test (1 df)',
          note: null,
        },
        {
          covariateKey: 'smoker',
          armId: C,
          referenceArmId: A,
          pValue: 0.7,
          test: 'Pearson chi-square test (1 df)',
          note: null,
        },
      ]),
    );
    expect(three.singleComparison).toBeNull();
  });

  it('says "not computed" for a missing p-value rather than a bare dash', () => {
    expect(formatP(null)).toBe('not computed');
    expect(formatP(0.05)).toBe('0.050');
    expect(formatP(0.00099)).toBe('< 0.001');
  });
});
