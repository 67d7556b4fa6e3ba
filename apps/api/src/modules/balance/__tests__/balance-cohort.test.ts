import {
  categoricalSmd,
  effectiveSampleSize,
  logisticRegression,
  propensityWeights,
  standardizedMeanDifference,
  varianceRatio,
} from '@counterpoise/stats';
import type { BalanceArmsView } from '@counterpoise/contracts/balance';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, type TestContext } from '../../../test/harness.js';
import { correct, createBalanceStudy, enroll, normal, readCounted, rng, runJob, withdraw, type BalanceStudy, type Enrollee } from './balance-fixtures.js';

/*
 * Observational cohort: starting the medicine depends on age and diabetes (confounding), so the
 * groups differ before weighting. The weighted SMDs in the snapshot must equal the stats
 * functions called directly on the stored rows: logistic model on the adjustment covariates
 * (categorical as dummies, first level left out), weights for the design's estimand, weighted
 * SMDs per Austin & Stuart 2015.
 */
const COVS = [
  { key: 'age', kind: 'continuous' as const, isAdjustment: true },
  { key: 'diabetic', kind: 'binary' as const, isAdjustment: true },
  { key: 'clinic_type', kind: 'categorical' as const, levels: ['urban', 'rural', 'mixed'], isAdjustment: true },
  { key: 'bmi', kind: 'continuous' as const },
];

function people(seed: number, n: number): Enrollee[] {
  const r = rng(seed);
  return Array.from({ length: n }, () => {
    const age = normal(r, 58, 10);
    const diabetic = r() < 0.3 ? 1 : 0;
    const clinic = ['urban', 'rural', 'mixed'][Math.floor(r() * 3)]!;
    const lp = -0.5 + 0.06 * (age - 58) + 0.9 * diabetic + (clinic === 'rural' ? -0.4 : 0);
    const started = r() < 1 / (1 + Math.exp(-lp)) ? 1 : 0;
    return { site: Math.floor(r() * 2), arm: started, values: { age, diabetic, clinic_type: clinic, bmi: normal(r, 28 + diabetic * 2, 4) } };
  });
}

async function direct(t: TestContext, study: BalanceStudy, estimand: 'ATE' | 'ATT' | 'overlap') {
  const rows = (await readCounted(t, study)).filter((r) => ['age', 'diabetic', 'clinic_type'].every((k) => r.values.has(k)));
  const levels = ['rural', 'mixed']; // 'urban' (first declared level) left out
  const X = rows.map((r) => [
    r.values.get('age')!.n!,
    r.values.get('diabetic')!.n!,
    ...levels.map((l) => (r.values.get('clinic_type')!.t === l ? 1 : 0)),
  ]);
  const y = rows.map((r) => (r.armId === study.armIds[1] ? 1 : 0));
  const fit = logisticRegression(X, y);
  const pw = propensityWeights(fit.fitted, y, { estimand });
  const t1 = rows.flatMap((r, i) => (y[i] === 1 ? [i] : []));
  const t0 = rows.flatMap((r, i) => (y[i] === 0 ? [i] : []));
  const pick = (idx: number[], key: string) => idx.filter((i) => rows[i]!.values.has(key));
  const smd = (key: string, kind: 'continuous' | 'binary' | 'categorical', weighted: boolean) => {
    const a = pick(t1, key);
    const c = pick(t0, key);
    const wa = a.map((i) => pw.weights[i]!);
    const wc = c.map((i) => pw.weights[i]!);
    if (kind === 'categorical') {
      const la = a.map((i) => rows[i]!.values.get(key)!.t!);
      const lc = c.map((i) => rows[i]!.values.get(key)!.t!);
      return weighted ? categoricalSmd(la, lc, { treated: wa, control: wc }) : categoricalSmd(la, lc);
    }
    const xa = a.map((i) => rows[i]!.values.get(key)!.n!);
    const xc = c.map((i) => rows[i]!.values.get(key)!.n!);
    return weighted ? standardizedMeanDifference(xa, xc, { kind, weightsTreated: wa, weightsControl: wc }) : standardizedMeanDifference(xa, xc, { kind });
  };
  const vrAfter = (key: string) => {
    const a = pick(t1, key);
    const c = pick(t0, key);
    return varianceRatio(a.map((i) => rows[i]!.values.get(key)!.n!), c.map((i) => rows[i]!.values.get(key)!.n!), {
      treated: a.map((i) => pw.weights[i]!),
      control: c.map((i) => pw.weights[i]!),
    });
  };
  return {
    n: rows.length,
    pw,
    smd,
    vrAfter,
    ess: [effectiveSampleSize(t0.map((i) => pw.weights[i]!)), effectiveSampleSize(t1.map((i) => pw.weights[i]!))],
  };
}

async function latestWeighting(t: TestContext, studyId: string) {
  const [s] = await t.ownerQuery<{ result: BalanceArmsView }>(
    `SELECT result FROM balance_snapshot WHERE study_id = $1 ORDER BY computed_at DESC LIMIT 1`,
    [studyId],
  );
  return s!.result;
}

describe('cohort balance with propensity-score weighting', () => {
  let t: TestContext;
  beforeAll(async () => {
    t = await createTestContext();
  });
  afterAll(async () => {
    await t.close();
  });

  for (const estimand of ['ATE', 'ATT', 'overlap'] as const) {
    it(`when a confounded cohort is weighted for the ${estimand}, then the weighted SMDs, variance ratios, weights and ESS equal a direct computation on the stored rows, also after a correction and a withdrawal`, async () => {
      const study = await createBalanceStudy(t, {
        kind: 'observational_cohort',
        arms: ['NOT_STARTED', 'STARTED'],
        covariates: COVS,
        design: { allocation: { method: 'exposure_recorded', weighting: { estimand } } },
      });
      const ids = await enroll(t, study, people(estimand.length * 11, 400));
      await runJob(t, { studyId: study.id, reason: 'import' });
      for (let round = 0; round < 2; round++) {
        const view = await latestWeighting(t, study.id);
        const w = view.weighting!;
        expect(w.status, w.note ?? '').toBe('ok');
        expect(w.estimand).toBe(estimand);
        expect(w.modelTerms).toEqual(['age', 'diabetic', 'clinic_type=rural', 'clinic_type=mixed']);
        const d = await direct(t, study, estimand);
        expect(w.n).toBe(d.n);
        expect(w.maxWeight).toBeCloseTo(d.pw.maxWeight, 9);
        expect(w.effectiveSampleSize.map((e) => e.ess)[0]).toBeCloseTo(d.ess[0]!, 8);
        expect(w.effectiveSampleSize.map((e) => e.ess)[1]).toBeCloseTo(d.ess[1]!, 8);
        for (const cov of COVS) {
          const got = w.covariates.find((c) => c.key === cov.key)!;
          expect(got.smdBefore, `${cov.key} before`).toBeCloseTo(d.smd(cov.key, cov.kind, false), 10);
          expect(got.smdAfter, `${cov.key} after`).toBeCloseTo(d.smd(cov.key, cov.kind, true), 8);
          if (cov.kind === 'continuous') expect(got.varianceRatioAfter).toBeCloseTo(d.vrAfter(cov.key), 8);
        }
        // The confounders are clearly imbalanced before weighting.
        expect(Math.abs(w.covariates.find((c) => c.key === 'age')!.smdBefore!)).toBeGreaterThan(0.2);
        if (estimand === 'overlap') {
          // Li, Morgan & Zaslavsky 2018: exact mean balance on the model covariates.
          for (const k of ['age', 'diabetic']) expect(Math.abs(w.covariates.find((c) => c.key === k)!.smdAfter!)).toBeLessThan(1e-6);
          expect(w.cautions.join(' ')).toMatch(/by construction/);
        }
        expect(w.propensityOverlap.map((g) => g.bins.reduce((s, b) => s + b.count, 0))).toEqual(
          w.effectiveSampleSize.map((e) => e.n),
        );
        expect(view.cautions.join(' ')).toMatch(/says nothing about unmeasured/);
        // Next round: a correction and a withdrawal (withdrawn participants stay in, ITT).
        await correct(t, study, ids[3]!, 'age', 90);
        await withdraw(t, ids[5]!);
        await correct(t, study, ids[7]!, 'clinic_type', null);
        await runJob(t, { studyId: study.id, reason: 'correction' });
      }
    });
  }

  it('when no covariate is marked for adjustment, then weighting is reported as not available with the reason', async () => {
    const study = await createBalanceStudy(t, {
      kind: 'observational_cohort',
      covariates: COVS.map((c) => ({ ...c, isAdjustment: false })),
    });
    await enroll(t, study, people(3, 60));
    await runJob(t, { studyId: study.id, reason: 'import' });
    const w = (await latestWeighting(t, study.id)).weighting!;
    expect(w.status).toBe('not_available');
    expect(w.note).toMatch(/No covariate is marked for adjustment/);
  });
});
