import { z } from 'zod';
import { roleSchema, studyRoleSchema } from './common.js';

export const emailSchema = z.email('Enter a valid e-mail address').trim().toLowerCase().max(254);

/** 12+ characters: length beats composition rules (NIST SP 800-63B). */
export const newPasswordSchema = z
  .string()
  .min(12, 'Use at least 12 characters')
  .max(200, 'Use at most 200 characters');

export const signInBodySchema = z.object({
  email: emailSchema,
  password: z.string().min(1, 'Enter your password').max(200),
});
export type SignInBody = z.infer<typeof signInBodySchema>;

export const membershipSchema = z.object({
  studyId: z.uuid(),
  studyCode: z.string(),
  role: studyRoleSchema,
  siteIds: z.array(z.uuid()),
});
export type Membership = z.infer<typeof membershipSchema>;

export const meSchema = z.object({
  id: z.uuid(),
  email: z.string(),
  displayName: z.string(),
  isAdmin: z.boolean(),
  /** Every role the user holds anywhere, for navigation. */
  roles: z.array(roleSchema),
  memberships: z.array(membershipSchema),
  csrfToken: z.string(),
  sessionExpiresAt: z.string(),
});
export type Me = z.infer<typeof meSchema>;

export const passwordResetRequestSchema = z.object({ email: emailSchema });
export const passwordResetConfirmSchema = z.object({
  token: z.string().min(20).max(200),
  password: newPasswordSchema,
});
export const inviteAcceptSchema = z.object({
  token: z.string().min(20).max(200),
  displayName: z.string().trim().min(1).max(120),
  password: newPasswordSchema,
});

export const inviteBodySchema = z.object({
  email: emailSchema,
  displayName: z.string().trim().min(1, 'Enter a name').max(120),
  isAdmin: z.boolean().default(false),
  memberships: z
    .array(z.object({ studyId: z.uuid(), role: studyRoleSchema, siteIds: z.array(z.uuid()).default([]) }))
    .default([]),
});
export type InviteBody = z.infer<typeof inviteBodySchema>;

export const membershipUpdateSchema = z.object({
  isAdmin: z.boolean().optional(),
  status: z.enum(['active', 'disabled']).optional(),
  memberships: z
    .array(z.object({ studyId: z.uuid(), role: studyRoleSchema, siteIds: z.array(z.uuid()).default([]) }))
    .optional(),
  reason: z.string().trim().min(3).max(2000),
});
