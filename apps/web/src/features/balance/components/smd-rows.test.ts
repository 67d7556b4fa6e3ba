import { describe, expect, it } from 'vitest';
import { balanceArmsViewSchema, type BalanceArmsView } from '@counterpoise/contracts/balance';
import { formatSmd } from './format.js';
import { smdRows } from './smd-rows.js';

const ref = '00000000-0000-4000-8000-000000000001';
const arm = '00000000-0000-4000-8000-000000000002';
const third = '00000000-0000-4000-8000-000000000003';
const flags = { smdOverThreshold: false, beyondChance: false, varianceRatioOutside: false };
const summary = { n: 10, missing: 0, mean: 1, sd: 1, median: 1, q1: 0, q3: 2, min: 0, max: 2, levels: null };

function comparison(armId: string, smd: number) {
  return {
    armId,
    referenceArmId: ref,
    nArm: 10,
    nReference: 12,
    smd,
    varianceRatio: 1,
    chanceBand: { level: 0.95, se: 0.43, halfWidth: 0.84, lower: -0.84, upper: 0.84 },
    flags,
    note: null,
  };
}

function view(arms: string[], weighting: BalanceArmsView['weighting']): BalanceArmsView {
  return balanceArmsViewSchema.parse({
    view: 'arms',
    freshness: { computedAt: null, recomputePending: false, enrolledCount: null },
    snapshot: {
      id: '00000000-0000-4000-8000-0000000000aa',
      computedAt: '2026-01-01T00:00:00Z',
      kind: 'full',
      reason: 'test',
      designVersion: 1,
      enrolledCount: 22,
      studyKind: weighting ? 'observational_cohort' : 'randomized_trial',
      quantilesComputedAt: '2026-01-01T00:00:00Z',
    },
    scope: { siteId: null },
    arms: [ref, ...arms].map((id, i) => ({ id, code: `A${i}`, name: `Arm ${i}`, position: i })),
    referenceArmId: ref,
    comparisonNote: null,
    rules: {
      smdThreshold: 0.1,
      varianceRatio: [0.5, 2],
      chanceAware: true,
      minPerArmForSiteAlerts: 10,
      chanceLevel: 0.95,
    },
    chance: { covariateCount: 1, threshold: 0.1, expected: null, probabilityAtLeastOne: null, observed: 0 },
    covariates: [
      {
        key: 'age',
        label: 'Age',
        kind: 'continuous',
        unit: 'years',
        levels: null,
        isAdjustment: true,
        isStratification: false,
        balance: {
          byArm: [],
          pooled: summary,
          comparisons: arms.map((a, i) => comparison(a, 0.2 + i / 10)),
        },
      },
    ],
    siteGrid: null,
    site: null,
    weighting,
    cautions: [],
  });
}

describe('smdRows', () => {
  it('when a trial has two arms, then there is one row per covariate labelled by the covariate alone', () => {
    const rows = smdRows(view([arm], null));
    expect(rows).toHaveLength(1);
    expect(rows[0]).toMatchObject({
      label: 'Age',
      comparison: 'A1 vs A0',
      smd: 0.2,
      halfWidth: 0.84,
      after: null,
    });
  });

  it('when there are three arms, then each non-reference arm gets its own row named by its comparison', () => {
    const rows = smdRows(view([arm, third], null));
    expect(rows.map((r) => r.label)).toEqual(['Age (A1 vs A0)', 'Age (A2 vs A0)']);
    expect(rows[0]?.smd).toBe(0.2);
    expect(rows[1]?.smd).toBeCloseTo(0.3, 12);
  });

  it('when weighting is available, then the row carries the SMD before and after weighting', () => {
    const weighting: NonNullable<BalanceArmsView['weighting']> = {
      estimand: 'ATE',
      status: 'ok',
      note: null,
      treatedArmId: arm,
      modelCovariates: ['age'],
      modelTerms: ['age'],
      n: 22,
      maxWeight: 3,
      extremeWeightThreshold: 10,
      extremeWeightCount: 0,
      effectiveSampleSize: [],
      weightHistogram: [],
      propensityOverlap: [],
      covariates: [
        {
          key: 'age',
          inModel: true,
          smdBefore: 0.2,
          smdAfter: 0.01,
          varianceRatioBefore: 1,
          varianceRatioAfter: 1,
        },
      ],
      flags: { extremeWeights: false, lowEffectiveSampleSize: false },
      cautions: [],
    };
    expect(smdRows(view([arm], weighting))[0]).toMatchObject({ before: 0.2, after: 0.01 });
    // Weighting that could not be fitted contributes nothing.
    expect(smdRows(view([arm], { ...weighting, status: 'not_available' }))[0]).toMatchObject({ after: null });
  });
});

describe('formatSmd', () => {
  it('when a value is negative, then it is written with a true minus sign; zero has no sign', () => {
    expect(formatSmd(-0.1234)).toBe('\u22120.123');
    expect(formatSmd(0.05, 2)).toBe('+0.05');
    expect(formatSmd(-0.0001)).toBe('0.000');
    expect(formatSmd(null)).toBe('—');
  });
});
