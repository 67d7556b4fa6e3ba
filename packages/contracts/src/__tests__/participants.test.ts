import { describe, expect, it } from 'vitest';
import { buildBaselineSchema, enrollBodySchema, evaluateEligibility, isCalendarDate, isoDateSchema, participantListQuerySchema, participantPatchBodySchema, type BaselineCovariate } from '../participants.js';
import type { EligibilityCriterion } from '../design.js';

const covariates: BaselineCovariate[] = [
  { key: 'age', label: 'Age', kind: 'continuous', unit: 'years', min: 18, max: 100, decimals: 0, required: true, windowDaysBefore: 30, windowDaysAfter: 0 },
  { key: 'fev1_pct', label: 'FEV1 % predicted', kind: 'continuous', unit: '%', min: 10, max: 150, decimals: 1, required: true, windowDaysBefore: 30, windowDaysAfter: 0 },
  { key: 'female', label: 'Female', kind: 'binary', required: true, windowDaysBefore: 30, windowDaysAfter: 0 },
  { key: 'smoking', label: 'Smoking status', kind: 'categorical', levels: ['never', 'former', 'current'], required: true, windowDaysBefore: 30, windowDaysAfter: 0 },
  { key: 'bmi', label: 'BMI', kind: 'continuous', unit: 'kg/m2', min: 12, max: 70, decimals: 1, required: false, windowDaysBefore: 90, windowDaysAfter: 7 },
];
const opts = { enrollmentDate: '2026-03-10', today: '2026-03-10' };
const good = {
  age: { value: 64, measuredOn: '2026-03-01' },
  fev1_pct: { value: 55.5, measuredOn: '2026-03-01' },
  female: { value: true, measuredOn: '2026-03-01' },
  smoking: { value: 'former', measuredOn: '2026-02-10' },
};

describe('buildBaselineSchema', () => {
  const schema = buildBaselineSchema(covariates, opts);
  it('accepts a complete, in-range, in-window record (optional covariate left out)', () => {
    expect(schema.safeParse(good).success).toBe(true);
  });

  const cases: { name: string; patch: Record<string, unknown>; path: string; message: RegExp }[] = [
    { name: 'continuous below the minimum', patch: { age: { value: 17, measuredOn: '2026-03-01' } }, path: 'age.value', message: /between 18 and 100 years/ },
    { name: 'continuous above the maximum', patch: { age: { value: 101, measuredOn: '2026-03-01' } }, path: 'age.value', message: /between 18 and 100/ },
    { name: 'whole number expected', patch: { age: { value: 64.5, measuredOn: '2026-03-01' } }, path: 'age.value', message: /whole number/ },
    { name: 'too many decimals', patch: { fev1_pct: { value: 55.55, measuredOn: '2026-03-01' } }, path: 'fev1_pct.value', message: /at most 1 decimal place/ },
    { name: 'number sent as text', patch: { age: { value: '64', measuredOn: '2026-03-01' } }, path: 'age.value', message: /must be a number/ },
    { name: 'binary given a string', patch: { female: { value: 'yes', measuredOn: '2026-03-01' } }, path: 'female.value', message: /yes or no/ },
    { name: 'categorical wrong level', patch: { smoking: { value: 'sometimes', measuredOn: '2026-03-01' } }, path: 'smoking.value', message: /choose one of never, former, current/ },
    { name: 'required covariate missing', patch: { smoking: undefined }, path: 'smoking', message: /Smoking status is required/ },
    { name: 'date in the future', patch: { age: { value: 64, measuredOn: '2026-03-11' } }, path: 'age.measuredOn', message: /in the future/ },
    { name: 'date before the window', patch: { age: { value: 64, measuredOn: '2026-02-07' } }, path: 'age.measuredOn', message: /more than 30 days before enrollment/ },
    { name: 'not a real date', patch: { age: { value: 64, measuredOn: '2026-02-30' } }, path: 'age.measuredOn', message: /real calendar date/ },
    { name: 'unknown covariate', patch: { height: { value: 170, measuredOn: '2026-03-01' } }, path: '', message: /Unknown covariate/ },
  ];
  it.each(cases)('rejects $name with a plain message at $path', ({ patch, path, message }) => {
    const input: Record<string, unknown> = { ...good, ...patch };
    for (const [k, v] of Object.entries(patch)) if (v === undefined) delete input[k];
    const r = schema.safeParse(input);
    expect(r.success).toBe(false);
    const issue = r.error!.issues.find((i) => i.path.join('.') === path);
    expect(issue, JSON.stringify(r.error!.issues)).toBeDefined();
    expect(issue!.message).toMatch(message);
  });

  it('accepts the window edges and rejects one day past them', () => {
    // 2026-03-10 minus 30 days is 2026-02-08 (February 2026 has 28 days).
    expect(schema.safeParse({ ...good, age: { value: 64, measuredOn: '2026-02-07' } }).success).toBe(false);
    expect(schema.safeParse({ ...good, age: { value: 64, measuredOn: '2026-02-08' } }).success).toBe(true);
    // BMI window: 90 days before, 7 after; "after" is still capped by today.
    const later = buildBaselineSchema(covariates, { enrollmentDate: '2026-03-10', today: '2026-03-30' });
    expect(later.safeParse({ ...good, bmi: { value: 27.3, measuredOn: '2026-03-17' } }).success).toBe(true);
    expect(later.safeParse({ ...good, bmi: { value: 27.3, measuredOn: '2026-03-18' } }).success).toBe(false);
  });

  it('in partial mode checks only what is sent', () => {
    const partial = buildBaselineSchema(covariates, { ...opts, partial: true });
    expect(partial.safeParse({ age: { value: 70, measuredOn: '2026-03-01' } }).success).toBe(true);
    expect(partial.safeParse({ age: { value: 10, measuredOn: '2026-03-01' } }).success).toBe(false);
  });
});

describe('evaluateEligibility', () => {
  const criteria: EligibilityCriterion[] = [
    { id: 'age40', kind: 'inclusion', label: 'Aged 40 or over', field: 'age', op: '>=', value: 40 },
    { id: 'fev_lo', kind: 'inclusion', label: 'FEV1 % at least 30', field: 'fev1_pct', op: '>=', value: 30 },
    { id: 'fev_hi', kind: 'inclusion', label: 'FEV1 % at most 80', field: 'fev1_pct', op: '<=', value: 80 },
    { id: 'preg', kind: 'exclusion', label: 'Pregnant', field: 'pregnant', op: '==', value: true },
    { id: 'smk', kind: 'inclusion', label: 'Smoking status recorded', field: 'smoking', op: 'in', value: ['never', 'former', 'current'] },
  ];
  it.each([
    { answers: { age: 64, fev1_pct: 55, pregnant: false, smoking: 'former' }, failed: [] },
    { answers: { age: 39, fev1_pct: 55, pregnant: false, smoking: 'former' }, failed: ['age40'] },
    { answers: { age: 40, fev1_pct: 80.1, pregnant: false, smoking: 'never' }, failed: ['fev_hi'] },
    { answers: { age: 50, fev1_pct: 30, pregnant: true, smoking: 'current' }, failed: ['preg'] },
    { answers: { age: 50, fev1_pct: 30, pregnant: false }, failed: ['smk'] },
    { answers: { age: '50', fev1_pct: 30, pregnant: false, smoking: 'x' }, failed: ['age40', 'smk'] },
  ])('fails exactly $failed', ({ answers, failed }) => {
    const r = evaluateEligibility(criteria, answers);
    expect(r.failed.map((f) => f.id)).toEqual(failed);
    expect(r.eligible).toBe(failed.length === 0);
  });
});

describe('request bodies', () => {
  it('enroll body needs a site uuid and consent date and version', () => {
    expect(enrollBodySchema.safeParse({ siteId: 'x', consent: { date: '2026-01-01', version: 'v1' }, baseline: {} }).success).toBe(false);
    expect(
      enrollBodySchema.safeParse({ siteId: '7c3f8f2e-1d2a-4c55-9b7a-0d7f1b2c3d4e', consent: { date: '2026-01-01', version: '' }, baseline: {} }).success,
    ).toBe(false);
    expect(
      enrollBodySchema.safeParse({ siteId: '7c3f8f2e-1d2a-4c55-9b7a-0d7f1b2c3d4e', consent: { date: '2026-01-01', version: '2.1' }, baseline: {} }).success,
    ).toBe(true);
  });
  it('patch body requires a reason for corrections and withdrawals', () => {
    expect(participantPatchBodySchema.safeParse({ action: 'withdraw' }).success).toBe(false);
    expect(participantPatchBodySchema.safeParse({ action: 'withdraw', reason: 'no' }).success).toBe(false);
    expect(participantPatchBodySchema.safeParse({ action: 'withdraw', reason: 'moved abroad' }).success).toBe(true);
    expect(participantPatchBodySchema.safeParse({ action: 'correct', baseline: {} }).success).toBe(false);
  });
  it('list query coerces paging and refuses unknown sorts and huge pages', () => {
    expect(participantListQuerySchema.parse({ page: '2', pageSize: '50' })).toMatchObject({ page: 2, pageSize: 50, sort: '-enrolledAt' });
    expect(participantListQuerySchema.safeParse({ sort: 'dob' }).success).toBe(false);
    expect(participantListQuerySchema.safeParse({ pageSize: '1000' }).success).toBe(false);
  });
});

describe('isCalendarDate', () => {
  // Reference: ECMAScript's Date, which uses the proleptic Gregorian calendar (ECMA-262, "Time
  // Values and Time Range"): a text is a real day when a UTC round trip gives it back unchanged.
  const byDate = (s: string) => {
    const t = Date.parse(`${s}T00:00:00Z`);
    return !Number.isNaN(t) && new Date(t).toISOString().startsWith(s);
  };
  const pad = (n: number, w: number) => String(n).padStart(w, '0');

  it('agrees with Date on every month and day number 0-32 from 1896 to 2104', () => {
    let disagreements = 0;
    let checked = 0;
    for (let y = 1896; y <= 2104; y++) {
      for (let m = 0; m <= 13; m++) {
        for (let d = 0; d <= 32; d++) {
          const s = `${pad(y, 4)}-${pad(m, 2)}-${pad(d, 2)}`;
          checked++;
          if (isCalendarDate(s) !== byDate(s)) disagreements++;
        }
      }
    }
    expect(checked).toBe(209 * 14 * 33);
    expect(disagreements).toBe(0);
  });

  it('follows the Gregorian leap-year rule for centuries (1900 is not a leap year, 2000 is)', () => {
    expect(isCalendarDate('1900-02-29')).toBe(false);
    expect(isCalendarDate('2000-02-29')).toBe(true);
    expect(isCalendarDate('2024-02-29')).toBe(true);
    expect(isCalendarDate('2026-02-29')).toBe(false);
    expect(isoDateSchema.safeParse('2026-04-31').success).toBe(false);
    expect(isoDateSchema.safeParse('2026-12-31').success).toBe(true);
  });
});
