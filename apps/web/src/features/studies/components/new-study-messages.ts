import { isApiError } from '../../../lib/api-client.js';
import { errorMessage } from '../../../lib/form-errors.js';

/*
 * Plain words for the "New study" form. The shared schema (studyCreateBodySchema) already
 * words the code and title rules; these cover the choices and the number, which it leaves
 * to zod's defaults ("Invalid option: expected one of ...").
 */

type Issue = { code: string; path?: PropertyKey[]; expected?: string; minimum?: unknown; maximum?: unknown };

export function newStudyIssueMessage(issue: Issue): string | undefined {
  const field = issue.path?.[0];
  if (field === 'kind') return 'Choose a randomized trial or an observational cohort';
  if (field === 'blinding') return 'Choose blinded or open label';
  if (field === 'targetSampleSize') {
    if (issue.code === 'invalid_type' && issue.expected === 'int')
      return 'Enter a whole number of participants';
    if (issue.code === 'invalid_type') return 'Enter the number of participants to enroll, e.g. 240';
    if (issue.code === 'too_small')
      return `Enter at least ${Number(issue.minimum).toLocaleString('en')} participants`;
    if (issue.code === 'too_big')
      return `Enter at most ${Number(issue.maximum).toLocaleString('en')} participants`;
  }
  return undefined;
}

export type CreateFailure = {
  /** Shown at the code field, when the code is what the server refused. */
  codeMessage?: string;
  /** Shown in the form-level alert. */
  formMessage: string;
};

/** What to tell the user when the server refuses to create the study with `code`. */
export function describeCreateFailure(error: unknown, code: string): CreateFailure {
  // The study code is the only unique field: a conflict (the service's check, or the unique
  // index when two people create the same code at once) is about it.
  if (isApiError(error, 'conflict')) {
    return {
      codeMessage: `Another study already uses the code ${code}. Choose a different code.`,
      formMessage: 'The study was not created: its code is already taken.',
    };
  }
  if (isApiError(error, 'validation_failed')) {
    return { formMessage: 'The study was not created: some answers need a change.' };
  }
  if (isApiError(error, 'forbidden')) {
    return {
      formMessage:
        'Your account may not create studies. Administrators and study statisticians can; ask an administrator.',
    };
  }
  return { formMessage: `The study was not created. ${errorMessage(error)}` };
}
