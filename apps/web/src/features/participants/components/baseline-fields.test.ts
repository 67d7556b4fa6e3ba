import { describe, expect, it } from 'vitest';
import { buildBaselineSchema, type BaselineCovariate } from '@counterpoise/contracts/participants';
import { baselineDraftSchema, draftToBaseline, emptyDraft } from './baseline-fields.js';

// Invented covariates for the checks (demo only).
const covariates: BaselineCovariate[] = [
  {
    key: 'age',
    label: 'Age',
    kind: 'continuous',
    unit: 'years',
    min: 18,
    max: 100,
    decimals: 0,
    required: true,
    windowDaysBefore: 30,
    windowDaysAfter: 0,
  },
  {
    key: 'smoker',
    label: 'Current smoker',
    kind: 'binary',
    required: true,
    windowDaysBefore: 30,
    windowDaysAfter: 0,
  },
  {
    key: 'sex',
    label: 'Sex',
    kind: 'categorical',
    levels: ['female', 'male'],
    required: false,
    windowDaysBefore: 30,
    windowDaysAfter: 0,
  },
];
const opts = { enrollmentDate: '2026-03-14', today: '2026-03-14' };

function messages(result: {
  success: boolean;
  error?: { issues: { path: PropertyKey[]; message: string }[] };
}) {
  return (result.error?.issues ?? []).map((i) => `${i.path.map(String).join('.')}: ${i.message}`).sort();
}

describe('the enrollment form schema built on buildBaselineSchema', () => {
  it('when the form holds valid text, then it converts to the values the API schema accepts', () => {
    const draft = {
      age: { value: '64', measuredOn: '2026-03-10' },
      smoker: { value: 'no', measuredOn: '2026-03-10' },
      sex: { value: '', measuredOn: '' },
    };
    const parsed = baselineDraftSchema(covariates, opts).safeParse(draft);
    expect(parsed.success).toBe(true);
    expect(parsed.data).toEqual({
      age: { value: 64, measuredOn: '2026-03-10' },
      smoker: { value: false, measuredOn: '2026-03-10' },
    });
  });

  it.each([
    ['an age out of range', { age: { value: '101', measuredOn: '2026-03-10' } }],
    ['a fractional age', { age: { value: '64.5', measuredOn: '2026-03-10' } }],
    ['a measurement in the future', { age: { value: '64', measuredOn: '2026-03-15' } }],
    ['a measurement before the window', { age: { value: '64', measuredOn: '2026-01-01' } }],
    ['a level that does not exist', { sex: { value: 'other', measuredOn: '2026-03-10' } }],
    ['a missing required covariate', {}],
  ])(
    'when the form holds %s, then it gives exactly the messages the server schema gives',
    (_name, partial) => {
      const draft = {
        ...emptyDraft(covariates),
        smoker: { value: 'yes', measuredOn: '2026-03-10' },
        ...partial,
      };
      const web = baselineDraftSchema(covariates, opts).safeParse(draft);
      const server = buildBaselineSchema(covariates, opts).safeParse(draftToBaseline(covariates, draft));
      expect(web.success).toBe(false);
      expect(messages(web)).toEqual(messages(server));
      expect(messages(web).length).toBeGreaterThan(0);
    },
  );

  it('when screening answers are given, then they prefill the form with the measurement date', () => {
    const draft = emptyDraft(covariates, { age: 70, smoker: true }, '2026-03-14');
    expect(draft.age).toEqual({ value: '70', measuredOn: '2026-03-14' });
    expect(draft.smoker).toEqual({ value: 'yes', measuredOn: '2026-03-14' });
    expect(draft.sex).toEqual({ value: '', measuredOn: '' });
  });
});
