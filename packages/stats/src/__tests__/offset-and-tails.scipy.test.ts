import { describe, it } from 'vitest';
import { ancova } from '../ancova/ancova.js';
import { expectClose, loadBalanceFixture } from '../balanceTestSupport/balanceTestSupport.js';
import { createAccumulator } from '../createAccumulator/createAccumulator.js';
import { expectedChanceExceedances } from '../expectedChanceExceedances/expectedChanceExceedances.js';
import { leveneTest } from '../leveneTest/leveneTest.js';
import { oneWayAnova } from '../oneWayAnova/oneWayAnova.js';
import { standardizedMeanDifference } from '../standardizedMeanDifference/standardizedMeanDifference.js';
import { summarize } from '../summarize/summarize.js';
import { varianceRatio } from '../varianceRatio/varianceRatio.js';

// Fixture: scripts/generate-offset-fixtures.py (numpy/scipy 1.17.1; references computed on the
// exactly shifted values x - 1e9). Cross-module on purpose: one data set, every method that
// takes moments of it.
type Fixture = {
  smd: Array<{ treated: number[]; control: number[]; weightsTreated?: number[]; weightsControl?: number[]; smd: number; varianceRatio: number }>;
  summaries: Array<{ values: number[]; mean: number; variance: number; skewness: number; excessKurtosis: number }>;
  accumulators: Array<{ values: number[]; weights: number[]; mean: number; variance: number }>;
  groups: Array<{ groups: number[][]; anovaF: number; anovaWithinSS: number; leveneMean: number; leveneMedian: number }>;
  ancova: Array<{ outcome: number[]; group: string[]; covariates: Record<string, number[]>; errorDf: number; adjustedMeans: Array<{ lower: number; upper: number }>; slopes: Array<{ lower: number; upper: number }> }>;
  ancovaOffset: Array<{ outcome: number[]; group: number[]; covariates: Record<string, number[]>; errorSS: number; groupSS: number; groupF: number; covariateSS: Record<string, number>; slopes: number[]; adjustedMeans: number[] }>;
  chance: Array<{ covariateCount: number; nTreated: number; nControl: number; threshold: number; probabilityPerCovariate: number; probabilityAtLeastOne: number }>;
};
const fx = loadBalanceFixture<Fixture>('offset-and-tails.json');
const tol = fx.tolerance;

describe('values at a 1e9 offset against numpy/scipy on the exactly shifted data', () => {
  fx.smd.forEach((c, i) => {
    it(`SMD and variance ratio, case ${i}${c.weightsTreated ? ' (weighted)' : ''}`, () => {
      const d = standardizedMeanDifference(c.treated, c.control, { kind: 'continuous', weightsTreated: c.weightsTreated, weightsControl: c.weightsControl });
      expectClose(d, c.smd, tol, { case: `smd ${i}`, quantity: 'd' });
      const weights = c.weightsTreated ? { treated: c.weightsTreated, control: c.weightsControl } : undefined;
      expectClose(varianceRatio(c.treated, c.control, weights), c.varianceRatio, tol, { case: `smd ${i}`, quantity: 'variance ratio' });
    });
  });
  fx.summaries.forEach((c, i) => {
    it(`summarize, case ${i} (n = ${c.values.length})`, () => {
      const s = summarize(c.values);
      expectClose(s.mean, c.mean, tol, { case: `summary ${i}`, quantity: 'mean' });
      expectClose(s.variance, c.variance, tol, { case: `summary ${i}`, quantity: 'variance' });
      expectClose(s.skewness, c.skewness, tol, { case: `summary ${i}`, quantity: 'skewness (scipy bias=False)' });
      expectClose(s.excessKurtosis, c.excessKurtosis, tol, { case: `summary ${i}`, quantity: 'excess kurtosis (scipy bias=False)' });
    });
  });
  fx.accumulators.forEach((c, i) => {
    it(`weighted accumulator, case ${i}`, () => {
      const acc = createAccumulator();
      c.values.forEach((x, j) => acc.add(x, c.weights[j]));
      expectClose(acc.mean, c.mean, tol, { case: `accumulator ${i}`, quantity: 'mean' });
      expectClose(acc.variance, c.variance, tol, { case: `accumulator ${i}`, quantity: 'Austin & Stuart variance' });
    });
  });
  fx.groups.forEach((c, i) => {
    it(`one-way ANOVA and Levene, case ${i} (${c.groups.length} groups)`, () => {
      const a = oneWayAnova(c.groups);
      expectClose(a.between.f, c.anovaF, tol, { case: `groups ${i}`, quantity: 'F (scipy f_oneway)' });
      expectClose(a.within.ss, c.anovaWithinSS, tol, { case: `groups ${i}`, quantity: 'SS within' });
      expectClose(leveneTest(c.groups, { center: 'mean' }).statistic, c.leveneMean, tol, { case: `groups ${i}`, quantity: 'Levene W (mean)' });
      expectClose(leveneTest(c.groups, { center: 'median' }).statistic, c.leveneMedian, tol, { case: `groups ${i}`, quantity: 'Brown-Forsythe W (median)' });
    });
  });
});

describe('ANCOVA confidence limits against numpy lstsq and scipy t.ppf', () => {
  fx.ancova.forEach((c, i) => {
    it(`case ${i} (error df ${c.errorDf})`, () => {
      const r = ancova({ outcome: c.outcome, group: c.group, covariates: c.covariates });
      c.adjustedMeans.forEach((m, g) => {
        expectClose(r.adjustedMeans[g]?.lower ?? null, m.lower, tol, { case: `ancova ${i}`, quantity: `adjusted mean ${g} lower` });
        expectClose(r.adjustedMeans[g]?.upper ?? null, m.upper, tol, { case: `ancova ${i}`, quantity: `adjusted mean ${g} upper` });
      });
      c.slopes.forEach((s, j) => {
        expectClose(r.slopes[j]?.lower ?? null, s.lower, tol, { case: `ancova ${i}`, quantity: `slope ${j} lower` });
        expectClose(r.slopes[j]?.upper ?? null, s.upper, tol, { case: `ancova ${i}`, quantity: `slope ${j} upper` });
      });
    });
  });
});

describe('ANCOVA with the outcome at a 1e6 offset against numpy lstsq on y - 1e6', () => {
  // Fitting the raw outcome left ~1e-9 relative error in small Type III SS (Q'y carries the
  // offset); the fit is now on y - ybar.
  fx.ancovaOffset.forEach((c, i) => {
    it(`case ${i} (${Object.keys(c.covariates).length} covariates, numeric group labels)`, () => {
      const r = ancova({ outcome: c.outcome, group: c.group, covariates: c.covariates });
      const group = r.terms.find((t) => t.term === 'group');
      expectClose(r.error.ss, c.errorSS, tol, { case: `ancova offset ${i}`, quantity: 'SSE' });
      expectClose(group?.ss ?? null, c.groupSS, tol, { case: `ancova offset ${i}`, quantity: 'group Type III SS' });
      expectClose(group?.f ?? null, c.groupF, tol, { case: `ancova offset ${i}`, quantity: 'group F' });
      for (const [name, ss] of Object.entries(c.covariateSS)) {
        expectClose(r.terms.find((t) => t.term === name)?.ss ?? null, ss, tol, { case: `ancova offset ${i}`, quantity: `${name} Type III SS` });
      }
      c.slopes.forEach((b, j) => expectClose(r.slopes[j]?.estimate ?? null, b, tol, { case: `ancova offset ${i}`, quantity: `slope ${j}` }));
      c.adjustedMeans.forEach((m, g) => expectClose(r.adjustedMeans[g]?.mean ?? null, m, tol, { case: `ancova offset ${i}`, quantity: `adjusted mean ${g}` }));
    });
  });
});

describe('chance exceedances in the far normal tail against scipy norm.sf', () => {
  fx.chance.forEach((c, i) => {
    it(`case ${i}: k = ${c.covariateCount}, ${c.nTreated} vs ${c.nControl}, threshold ${c.threshold}`, () => {
      const r = expectedChanceExceedances(c.covariateCount, c.nTreated, c.nControl, c.threshold);
      const rel = { relative: tol.relative, absoluteFloor: 0 };
      expectClose(r.probabilityPerCovariate, c.probabilityPerCovariate, rel, { case: `chance ${i}`, quantity: 'P(|d| > t)' });
      expectClose(r.probabilityAtLeastOne, c.probabilityAtLeastOne, rel, { case: `chance ${i}`, quantity: 'P(at least one)' });
    });
  });
});
