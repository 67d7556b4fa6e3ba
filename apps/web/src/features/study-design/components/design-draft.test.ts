import { describe, expect, it } from 'vitest';
import type { StudyDetail } from '../../../lib/study-detail.js';
import { designDraftSchema, draftFromStudy, draftStrata } from './design-draft.js';

// An invented study (demo only) in the shape GET /api/studies/:id returns to a statistician.
const uuid = (n: number) => `00000000-0000-4000-8000-${String(n).padStart(12, '0')}`;
const study: StudyDetail = {
  id: uuid(1),
  code: 'DEMO',
  title: 'Demo study',
  kind: 'randomized_trial',
  blinding: 'blinded',
  status: 'enrolling',
  targetSampleSize: 120,
  designVersion: 3,
  enrolled: 0,
  arms: [
    { id: uuid(2), code: 'A', name: 'Arm A', ratio: 1 },
    { id: uuid(3), code: 'B', name: 'Arm B', ratio: 1 },
  ],
  armCount: 2,
  sites: [
    { id: uuid(4), code: 'S1', name: 'Site one', enrollmentTarget: 60, status: 'active' },
    { id: uuid(5), code: 'S2', name: 'Site two', enrollmentTarget: 60, status: 'active' },
  ],
  covariates: [
    {
      id: uuid(6),
      key: 'age',
      label: 'Age',
      kind: 'continuous',
      unit: 'years',
      min: 18,
      max: 90,
      decimals: 0,
      levels: null,
      required: true,
      windowDaysBefore: 30,
      windowDaysAfter: 0,
      isStratification: false,
      isAdjustment: true,
      isOutcomeBaseline: false,
      reliability: null,
      position: 0,
    },
    {
      id: uuid(7),
      key: 'grade',
      label: 'Grade',
      kind: 'categorical',
      unit: null,
      min: null,
      max: null,
      decimals: null,
      levels: ['I', 'II', 'III'],
      required: true,
      windowDaysBefore: 30,
      windowDaysAfter: 0,
      isStratification: true,
      isAdjustment: false,
      isOutcomeBaseline: false,
      reliability: 0.8,
      position: 1,
    },
  ],
  screeningQuestions: [{ key: 'consents', label: 'Willing to take part', kind: 'binary' }],
  eligibility: [
    { id: 'C1', kind: 'inclusion', label: 'Adult', field: 'age', op: '>=', value: 18 },
    { id: 'C2', kind: 'inclusion', label: 'Willing', field: 'consents', op: '==', value: true },
    { id: 'C3', kind: 'exclusion', label: 'Grade III', field: 'grade', op: 'in', value: ['III'] },
  ],
  allocation: {
    method: 'permuted_blocks',
    blockSizes: [4, 6],
    stratifyBySite: true,
    seed: 'abc',
    algorithm: 'pb',
    algorithmVersion: '1',
  },
  alertRules: { smdThreshold: 0.1, varianceRatio: [0.5, 2], chanceAware: true, minPerArmForSiteAlerts: 10, siteRules: ['smd_beyond_chance'] },
  strataPlan: null,
  myRole: 'statistician',
  permissions: ['study.design'],
  unblinded: true,
  canSeeArms: true,
};

describe('the design form draft', () => {
  it('when a saved design is loaded and sent back unchanged, then the body equals the saved design', () => {
    const parsed = designDraftSchema(false).safeParse(draftFromStudy(study));
    expect(parsed.success, JSON.stringify(parsed.error?.issues)).toBe(true);
    expect(parsed.data?.allocation).toEqual({
      method: 'permuted_blocks',
      blockSizes: [4, 6],
      stratifyBySite: true,
    });
    expect(parsed.data?.eligibility.map((c) => c.value)).toEqual([18, true, ['III']]);
    expect(parsed.data?.covariates[1]).toMatchObject({
      kind: 'categorical',
      levels: ['I', 'II', 'III'],
      reliability: 0.8,
    });
  });

  it('when a block size is not a multiple of the ratio sum, then the issue sits on that block size', () => {
    const draft = draftFromStudy(study);
    draft.allocation.blockSizes = '4, 5';
    const parsed = designDraftSchema(false).safeParse(draft);
    expect(parsed.success).toBe(false);
    const issue = parsed.error!.issues.find((i) => i.path.join('.') === 'allocation.blockSizes.1');
    expect(issue?.message).toContain('Block size 5');
  });

  it('when participants are enrolled and no reason is given, then the reason is asked for', () => {
    const parsed = designDraftSchema(true).safeParse(draftFromStudy(study));
    expect(parsed.success).toBe(false);
    expect(parsed.error!.issues.map((i) => i.path.join('.'))).toContain('reason');
  });

  it('when a continuous bound is left empty, then it is refused rather than read as 0', () => {
    const draft = draftFromStudy(study);
    draft.covariates[0]!.min = '';
    const parsed = designDraftSchema(false).safeParse(draft);
    expect(parsed.success).toBe(false);
    expect(parsed.error!.issues.some((i) => i.path.join('.') === 'covariates.0.min')).toBe(true);
  });

  // Hallstrom & Davis (1988): K strata x block size B / 2; here K = 3 grades x 2 sites = 6, B = 6.
  it('when stratified by grade and site with blocks up to 6, then the draft bound is 6 x 6 / 2 = 18', () => {
    expect(draftStrata(draftFromStudy(study))).toEqual({ strata: 6, maxBlock: 6, bound: 18 });
  });
});
