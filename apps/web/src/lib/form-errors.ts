import type { FieldValues, Path, UseFormSetError } from 'react-hook-form';
import { isApiError } from './api-client.js';

/**
 * Puts the server's `validation_failed` field messages next to their fields. Returns the
 * messages that matched no field, so the caller can show them in the form-level alert.
 */
export function applyServerFieldErrors<T extends FieldValues>(
  error: unknown,
  setError: UseFormSetError<T>,
  fields: readonly string[],
): string[] {
  if (!isApiError(error, 'validation_failed')) return [];
  const unmatched: string[] = [];
  for (const issue of error.fieldIssues()) {
    const name = issue.path.join('.');
    const known = fields.some((f) => name === f || name.startsWith(`${f}.`));
    if (known && name) setError(name as Path<T>, { type: 'server', message: issue.message });
    else unmatched.push(issue.message);
  }
  return unmatched;
}

export function errorMessage(error: unknown): string {
  if (error instanceof Error) return error.message;
  return 'Something went wrong. Try again.';
}
