import { describe, expect, it } from 'vitest';
import { designBodySchema, studyCreateBodySchema, type DesignBodyInput } from '../design.js';

const base: DesignBodyInput = {
  targetSampleSize: 300,
  arms: [
    { code: 'A', name: 'Arm A', ratio: 1 },
    { code: 'B', name: 'Arm B', ratio: 1 },
  ],
  sites: [{ code: 'S1', name: 'Site 1', enrollmentTarget: 100 }],
  covariates: [
    { key: 'age', label: 'Age', kind: 'continuous', unit: 'years', min: 18, max: 100 },
    { key: 'sex', label: 'Sex', kind: 'categorical', levels: ['female', 'male'], isStratification: true },
    { key: 'diabetes', label: 'Diabetes', kind: 'binary' },
  ],
  eligibility: [{ id: 'age', kind: 'inclusion', label: 'Adult aged 40+', field: 'age', op: '>=', value: 40 }],
  allocation: { method: 'permuted_blocks', blockSizes: [4, 6], stratifyBySite: true },
};

const issuePaths = (input: unknown) => {
  const r = designBodySchema.safeParse(input);
  return r.success ? [] : r.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`);
};

describe('designBodySchema', () => {
  it('accepts a valid design and fills defaults', () => {
    const d = designBodySchema.parse(base);
    expect(d.alertRules).toEqual({ smdThreshold: 0.1, varianceRatio: [0.5, 2], chanceAware: true, minPerArmForSiteAlerts: 10, siteRules: ['smd_beyond_chance'] });
    expect(d.covariates[0]).toMatchObject({ required: true, windowDaysBefore: 30, windowDaysAfter: 0, decimals: 0 });
  });

  it.each([
    { name: 'one arm', input: { ...base, arms: [base.arms[0]] }, expect: /arms: A study needs at least two arms/ },
    { name: 'duplicate arm codes', input: { ...base, arms: [base.arms[0], base.arms[0]] }, expect: /arms.1: Duplicate arm code 'A'/ },
    { name: 'min not below max', input: { ...base, covariates: [{ key: 'age', label: 'Age', kind: 'continuous', min: 5, max: 5 }] }, expect: /covariates.0.max/ },
    { name: 'one categorical level', input: { ...base, covariates: [{ key: 'sex', label: 'Sex', kind: 'categorical', levels: ['f'] }] }, expect: /at least two levels/ },
    { name: 'continuous stratification factor', input: { ...base, covariates: [{ key: 'age', label: 'Age', kind: 'continuous', min: 0, max: 1, isStratification: true }] }, expect: /do not dichotomise/ },
    { name: 'criterion on an unknown field', input: { ...base, eligibility: [{ id: 'x', kind: 'inclusion', label: 'X', field: 'height', op: '>', value: 1 }] }, expect: /No covariate or screening question 'height'/ },
    { name: "'in' without a list", input: { ...base, eligibility: [{ id: 'x', kind: 'inclusion', label: 'X', field: 'age', op: 'in', value: 1 }] }, expect: /a list of values/ },
    { name: 'block size not a multiple of the ratios', input: { ...base, allocation: { method: 'permuted_blocks', blockSizes: [4, 5], stratifyBySite: false } }, expect: /Block size 5 is not a multiple/ },
    { name: 'deterministic minimization', input: { ...base, allocation: { method: 'minimization', factors: ['sex'], weights: [1], probability: 1, imbalance: 'range' } }, expect: /allocation.probability/ },
    { name: 'minimization weights count', input: { ...base, allocation: { method: 'minimization', factors: ['sex', 'site'], weights: [1], probability: 0.8, imbalance: 'range' } }, expect: /one weight per factor/ },
    { name: 'minimization over a continuous covariate', input: { ...base, allocation: { method: 'minimization', factors: ['age'], weights: [1], probability: 0.8, imbalance: 'variance' } }, expect: /'age' must be a required binary or categorical/ },
    { name: 'short reason', input: { ...base, reason: 'x' }, expect: /reason: Give a reason/ },
  ])('rejects $name', ({ input, expect: pattern }) => {
    const issues = issuePaths(input);
    expect(issues.some((m) => pattern.test(m)), issues.join('\n')).toBe(true);
  });

  it('accepts minimization with site and a 2:1 ratio with blocks of 3 and 6', () => {
    expect(issuePaths({ ...base, allocation: { method: 'minimization', factors: ['sex', 'site'], weights: [1, 2], probability: 0.75, imbalance: 'range' } })).toEqual([]);
    expect(
      issuePaths({ ...base, arms: [{ code: 'A', name: 'A', ratio: 2 }, { code: 'B', name: 'B', ratio: 1 }], allocation: { method: 'permuted_blocks', blockSizes: [3, 6], stratifyBySite: true } }),
    ).toEqual([]);
  });
});

describe('studyCreateBodySchema', () => {
  it.each([
    [{ code: 'KESTREL', title: 'A trial', kind: 'randomized_trial', blinding: 'blinded', targetSampleSize: 400 }, true],
    [{ code: 'kestrel', title: 'A trial', kind: 'randomized_trial', blinding: 'blinded', targetSampleSize: 400 }, false],
    [{ code: 'K', title: 'A trial', kind: 'cohort', blinding: 'blinded', targetSampleSize: 400 }, false],
    [{ code: 'K', title: 'A trial', kind: 'randomized_trial', blinding: 'blinded', targetSampleSize: 1 }, false],
  ])('%j → %s', (input, ok) => {
    expect(studyCreateBodySchema.safeParse(input).success).toBe(ok);
  });
});
