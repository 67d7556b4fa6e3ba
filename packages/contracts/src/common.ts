import { z } from 'zod';

/** Roles a user holds within one study; `admin` is global and held on the account. */
export const studyRoleSchema = z.enum(['coordinator', 'statistician', 'sponsor', 'auditor']);
export type StudyRole = z.infer<typeof studyRoleSchema>;

export const roleSchema = z.enum(['admin', 'coordinator', 'statistician', 'sponsor', 'auditor']);
export type Role = z.infer<typeof roleSchema>;

export const uuidSchema = z.uuid();

/** The one error body every API error uses. */
export const errorBodySchema = z.object({
  error: z.object({
    code: z.string(),
    message: z.string(),
    details: z.unknown().optional(),
  }),
});
export type ErrorBody = z.infer<typeof errorBodySchema>;

/** Stable error codes; the API maps each to one HTTP status in one place. */
export const errorCodes = [
  'validation_failed',
  'unauthenticated',
  'invalid_credentials',
  'rate_limited',
  'csrf_failed',
  'forbidden',
  'not_found',
  'conflict',
  'token_invalid',
  'unsupported_media_type',
  'payload_too_large',
  'precondition_failed',
  'internal',
] as const;
export type ErrorCode = (typeof errorCodes)[number];

export const reasonSchema = z.string().trim().min(3, 'Give a reason of at least 3 characters').max(2000);
