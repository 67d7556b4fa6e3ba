import { auditPageSchema, auditQuerySchema, auditVerifySchema } from '@counterpoise/contracts/audit';
import {
  inviteAcceptSchema,
  inviteBodySchema,
  meSchema,
  membershipUpdateSchema,
  passwordResetConfirmSchema,
  passwordResetRequestSchema,
  signInBodySchema,
} from '@counterpoise/contracts/auth';
import { studyListSchema } from '@counterpoise/contracts/studies';
import { z } from 'zod';
import { registerOperations } from './registry.js';

registerOperations(
  { method: 'get', path: '/api/health', summary: 'Database and job-queue status', tag: 'system' },
  { method: 'get', path: '/api/openapi.json', summary: 'This document', tag: 'system' },
  { method: 'post', path: '/api/auth/sign-in', summary: 'Sign in; sets the session cookie', tag: 'auth', body: signInBodySchema, response: z.object({ me: meSchema }) },
  { method: 'post', path: '/api/auth/sign-out', summary: 'End the session', tag: 'auth', status: 204 },
  { method: 'get', path: '/api/me', summary: 'The signed-in user, roles and CSRF token', tag: 'auth', response: meSchema },
  { method: 'post', path: '/api/auth/password-reset/request', summary: 'E-mail a single-use reset link', tag: 'auth', body: passwordResetRequestSchema, status: 202 },
  { method: 'post', path: '/api/auth/password-reset/confirm', summary: 'Set a new password with a reset link', tag: 'auth', body: passwordResetConfirmSchema, status: 204 },
  { method: 'post', path: '/api/auth/invite/accept', summary: 'Accept an invitation and choose a password', tag: 'auth', body: inviteAcceptSchema, status: 204 },
  { method: 'get', path: '/api/studies', summary: 'Studies the user belongs to, with their permissions', tag: 'studies', response: studyListSchema },
  { method: 'get', path: '/api/studies/:studyId/sites', summary: 'Sites of a study (coordinators: their own)', tag: 'studies' },
  { method: 'get', path: '/api/admin/users', summary: 'Accounts with roles and sites', tag: 'admin', roles: 'admin' },
  { method: 'post', path: '/api/admin/users/invite', summary: 'Invite a user by e-mail', tag: 'admin', body: inviteBodySchema, status: 201, roles: 'admin' },
  { method: 'patch', path: '/api/admin/users/:userId', summary: 'Change roles, sites or status (reason required)', tag: 'admin', body: membershipUpdateSchema, roles: 'admin' },
  { method: 'get', path: '/api/admin/outbox', summary: 'Messages received by the local fake SMTP server', tag: 'admin', roles: 'admin (not in production)' },
  { method: 'get', path: '/api/audit', summary: 'Browse the audit trail', tag: 'audit', query: auditQuerySchema, response: auditPageSchema, roles: 'admin, statistician, auditor' },
  { method: 'get', path: '/api/audit/verify', summary: 'Walk the hash chain and report the first broken link', tag: 'audit', response: auditVerifySchema, roles: 'admin, statistician, auditor' },
  { method: 'get', path: '/api/audit/export.csv', summary: 'Export the visible audit trail as CSV', tag: 'audit', query: auditQuerySchema.omit({ limit: true }) },
);
