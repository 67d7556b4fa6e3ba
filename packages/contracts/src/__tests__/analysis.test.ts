import { describe, expect, it } from 'vitest';
import { analysisSpecSchema, lockBodySchema, lockSignatureMeaning, outcomesPutBodySchema, runBodySchema } from '../analysis.js';

const spec = {
  outcome: { key: 'six_mwd_wk12', label: 'Six-minute walk at week 12', unit: 'm' },
  baselineCovariateKey: 'six_mwd',
  covariates: [{ key: 'age', form: 'linear' }],
  includeStratificationFactors: true,
  alpha: 0.05,
};

describe('analysisSpecSchema', () => {
  it.each([
    ['a valid specification', spec, true],
    ['no baseline covariate', { ...spec, baselineCovariateKey: null }, true],
    ['a covariate listed twice', { ...spec, covariates: [{ key: 'age', form: 'linear' }, { key: 'age', form: 'linear' }] }, false],
    ['the baseline also as a further covariate', { ...spec, covariates: [{ key: 'six_mwd', form: 'linear' }] }, false],
    ['alpha 0', { ...spec, alpha: 0 }, false],
    ['alpha above 0.2', { ...spec, alpha: 0.3 }, false],
    ['an unknown functional form', { ...spec, covariates: [{ key: 'age', form: 'spline' }] }, false],
    ['an outcome key with capitals', { ...spec, outcome: { ...spec.outcome, key: 'SixMwd' } }, false],
  ])('%s → valid: %s', (_name, input, ok) => {
    expect(analysisSpecSchema.safeParse(input).success).toBe(ok);
  });
});

describe('lockBodySchema', () => {
  it.each([
    ['the exact meaning', { version: 1, password: 'x', meaning: lockSignatureMeaning }, true],
    ['another meaning', { version: 1, password: 'x', meaning: 'ok' }, false],
    ['no password', { version: 1, password: '', meaning: lockSignatureMeaning }, false],
    ['version 0', { version: 0, password: 'x', meaning: lockSignatureMeaning }, false],
  ])('%s → valid: %s', (_name, input, ok) => {
    expect(lockBodySchema.safeParse(input).success).toBe(ok);
  });
});

describe('outcomesPutBodySchema and runBodySchema', () => {
  const row = { participantCode: 'KES-0001', value: 412, measuredOn: '2026-03-01' };
  it.each([
    ['one row', { outcomeKey: 'six_mwd_wk12', rows: [row] }, true],
    ['no rows', { outcomeKey: 'six_mwd_wk12', rows: [] }, false],
    ['an infinite value', { outcomeKey: 'six_mwd_wk12', rows: [{ ...row, value: Number.POSITIVE_INFINITY }] }, false],
    ['a date in another format', { outcomeKey: 'six_mwd_wk12', rows: [{ ...row, measuredOn: '01/03/2026' }] }, false],
    ['a too-short reason', { outcomeKey: 'six_mwd_wk12', rows: [row], reason: 'x' }, false],
    ['30 February', { outcomeKey: 'six_mwd_wk12', rows: [{ ...row, measuredOn: '2026-02-30' }] }, false],
    ['29 February of a leap year', { outcomeKey: 'six_mwd_wk12', rows: [{ ...row, measuredOn: '2028-02-29' }] }, true],
    ['a blank participant code', { outcomeKey: 'six_mwd_wk12', rows: [{ ...row, participantCode: '  ' }] }, false],
    ['a value sent as text', { outcomeKey: 'six_mwd_wk12', rows: [{ ...row, value: '412' }] }, false],
  ])('%s → valid: %s', (_name, input, ok) => {
    expect(outcomesPutBodySchema.safeParse(input).success).toBe(ok);
  });

  it('accepts a run without a reason and refuses a blank one', () => {
    expect(runBodySchema.safeParse({}).success).toBe(true);
    expect(runBodySchema.safeParse({ reason: '  ' }).success).toBe(false);
  });
});
