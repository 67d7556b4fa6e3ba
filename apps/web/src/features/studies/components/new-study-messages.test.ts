import { describe, expect, it } from 'vitest';
import { studyCreateBodySchema } from '@counterpoise/contracts/design';
import { ApiError } from '../../../lib/api-client.js';
import { describeCreateFailure, newStudyIssueMessage } from './new-study-messages.js';

const valid = {
  code: 'FALCON',
  title: 'Falcon feasibility study',
  kind: 'randomized_trial',
  blinding: 'blinded',
  targetSampleSize: 240,
};

/** Field → message, as the form would show them (the shared schema with this form's wording). */
function messages(input: Record<string, unknown>): Record<string, string> {
  const result = studyCreateBodySchema.safeParse(input, { error: newStudyIssueMessage });
  if (result.success) return {};
  return Object.fromEntries(result.error.issues.map((i) => [i.path.join('.'), i.message]));
}

describe('newStudyIssueMessage with the shared studyCreateBodySchema', () => {
  it('when the answers are complete, then nothing is reported', () => {
    expect(messages(valid)).toEqual({});
  });

  it('when nothing is chosen or typed, then every field gets a plain message and none mentions schema terms', () => {
    // An empty number input reads as NaN through react-hook-form's valueAsNumber.
    const m = messages({ code: '', title: '', targetSampleSize: Number.NaN });
    expect(m).toEqual({
      code: 'Use 1-20 capital letters, digits or _, starting with a letter',
      title: 'Give a title of at least 3 characters',
      kind: 'Choose a randomized trial or an observational cohort',
      blinding: 'Choose blinded or open label',
      targetSampleSize: 'Enter the number of participants to enroll, e.g. 240',
    });
    expect(Object.values(m).join(' ')).not.toMatch(/expected|Invalid option|NaN|randomized_trial/);
  });

  it.each([
    [1, 'Enter at least 2 participants'],
    [2_000_000, 'Enter at most 1,000,000 participants'],
    [12.5, 'Enter a whole number of participants'],
  ])('when the target sample size is %s, then it says "%s"', (size, expected) => {
    expect(messages({ ...valid, targetSampleSize: size })).toEqual({ targetSampleSize: expected });
  });

  it('when a choice arrives with an unknown value, then the same plain message is shown', () => {
    expect(messages({ ...valid, blinding: 'partly' })).toEqual({ blinding: 'Choose blinded or open label' });
  });
});

describe('describeCreateFailure', () => {
  it('when the code is taken (409 from the service), then the message goes to the code field and names the code', () => {
    const error = new ApiError(409, 'conflict', 'A study with code FALCON already exists');
    expect(describeCreateFailure(error, 'FALCON')).toEqual({
      codeMessage: 'Another study already uses the code FALCON. Choose a different code.',
      formMessage: 'The study was not created: its code is already taken.',
    });
  });

  it('when two people create the same code at once (409 from the unique index), then it is still the code field', () => {
    const error = new ApiError(409, 'conflict', 'That record already exists', {
      constraint: 'study_code_key',
    });
    expect(describeCreateFailure(error, 'FALCON').codeMessage).toContain('FALCON');
  });

  it('when the server finds fields invalid, then only a form summary is added (field messages go to their fields)', () => {
    const error = new ApiError(400, 'validation_failed', 'Some fields are not valid', {
      issues: [{ path: ['title'], message: 'Give a title of at least 3 characters' }],
    });
    expect(describeCreateFailure(error, 'FALCON')).toEqual({
      formMessage: 'The study was not created: some answers need a change.',
    });
  });

  it('when the role does not allow it, then it says who may create studies', () => {
    const failure = describeCreateFailure(
      new ApiError(403, 'forbidden', 'Your role does not allow this'),
      'X',
    );
    expect(failure.codeMessage).toBeUndefined();
    expect(failure.formMessage).toMatch(/Administrators and study statisticians/);
  });

  it('when the server cannot be reached, then its own plain message is kept', () => {
    const error = new ApiError(
      0,
      'network',
      'The server could not be reached. Check your connection and try again.',
    );
    expect(describeCreateFailure(error, 'X').formMessage).toBe(
      'The study was not created. The server could not be reached. Check your connection and try again.',
    );
  });
});
