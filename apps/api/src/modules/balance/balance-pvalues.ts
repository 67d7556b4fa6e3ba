import { chiSquareIndependence, fisherExact2x2, oneWayAnova, SMALL_EXPECTED_COUNT } from '@counterpoise/stats';

/**
 * The labelled baseline p-value of one covariate for one arm against the reference arm, from
 * the values read for it. Pure: the SQL lives in balance.service.ts (`baselinePValues`).
 */

export type PValueEntry = { pValue: number | null; test: string; note: string | null };

export const PVALUE_METHOD =
  'Each arm against the reference arm, on the rows stored now (missing values left out). ' +
  'Continuous covariates: one-way ANOVA F test (the pooled two-sample t test). ' +
  "Binary and categorical covariates: Pearson's chi-square test of independence on the table of counts, levels by the two arms, " +
  'without continuity correction; levels with no one in either arm are dropped. ' +
  `For a 2 x 2 table with any expected count below ${SMALL_EXPECTED_COUNT} (a common-practice rule), Fisher's exact test instead, ` +
  'two-sided (the sum of the probabilities of all tables with the same margins that are no more likely than the observed one). ' +
  `Larger tables with expected counts below ${SMALL_EXPECTED_COUNT} keep the chi-square p-value, marked as doubtful.`;

const NONE = 'none';

export function continuousPValue(arm: number[], reference: number[]): PValueEntry {
  if (arm.length < 2 || reference.length < 2) {
    return { pValue: null, test: NONE, note: 'Not computed: each arm needs at least 2 recorded values.' };
  }
  try {
    return { pValue: oneWayAnova([arm, reference]).between.p, test: 'one-way ANOVA F test', note: null };
  } catch (err) {
    if (!(err instanceof RangeError)) throw err;
    return { pValue: null, test: NONE, note: 'Not computed: the values do not vary within either arm, so F is undefined.' };
  }
}

/**
 * Binary or categorical: counts per level in the arm and in the reference arm. `levelLabel`
 * turns a level key into the words a reader sees (binary 0/1 as no/yes).
 */
export function contingencyPValue(
  arm: ReadonlyMap<string, number>,
  reference: ReadonlyMap<string, number>,
  levelLabel: (level: string) => string = (l) => l,
): PValueEntry {
  const levels = [...new Set([...arm.keys(), ...reference.keys()])]
    .filter((l) => (arm.get(l) ?? 0) + (reference.get(l) ?? 0) > 0)
    .sort();
  const total = (m: ReadonlyMap<string, number>) => levels.reduce((s, l) => s + (m.get(l) ?? 0), 0);
  if (total(arm) === 0 || total(reference) === 0) {
    const which = total(arm) === 0 && total(reference) === 0 ? 'either arm' : total(arm) === 0 ? 'the compared arm' : 'the reference arm';
    return { pValue: null, test: NONE, note: `Not computed: no recorded values in ${which}.` };
  }
  if (levels.length < 2) {
    return {
      pValue: null,
      test: NONE,
      note: `Not computed: everyone with a recorded value in these two arms has the same level (${levelLabel(levels[0]!)}), so there is nothing to compare.`,
    };
  }
  const table = levels.map((l) => [arm.get(l) ?? 0, reference.get(l) ?? 0]);
  const chi = chiSquareIndependence(table);
  if (chi.rows === 2 && chi.smallExpected) {
    return {
      pValue: fisherExact2x2(table).p,
      test: "Fisher's exact test (two-sided)",
      note: `An expected count is below ${SMALL_EXPECTED_COUNT} (smallest ${chi.minExpected.toFixed(1)}), so the exact test is used rather than chi-square.`,
    };
  }
  const test = `Pearson chi-square test (${chi.df} df)`;
  if (!chi.smallExpected) return { pValue: chi.p, test, note: null };
  const cells = chi.rows * chi.columns;
  return {
    pValue: chi.p,
    test,
    note:
      `${chi.cellsBelowSmallExpected} of ${cells} expected counts are below ${SMALL_EXPECTED_COUNT} (smallest ${chi.minExpected.toFixed(1)}): ` +
      'the chi-square approximation is doubtful here (common-practice rule); no exact test is computed for tables larger than 2 x 2.',
  };
}
