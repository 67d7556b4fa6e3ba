import { z } from 'zod';
import { membershipSchema } from './auth.js';

/** Response shapes of the administration endpoints (users, local outbox, study sites). */

export const userStatusSchema = z.enum(['invited', 'active', 'disabled']);
export type UserStatus = z.infer<typeof userStatusSchema>;

export const adminUserSchema = z.object({
  id: z.uuid(),
  email: z.string(),
  displayName: z.string(),
  isAdmin: z.boolean(),
  status: userStatusSchema,
  memberships: z.array(membershipSchema),
});
export type AdminUser = z.infer<typeof adminUserSchema>;
export const adminUserListSchema = z.object({ users: z.array(adminUserSchema) });

export const outboxMessageSchema = z.object({
  id: z.string(),
  receivedAt: z.string(),
  from: z.string(),
  to: z.array(z.string()),
  subject: z.string(),
  text: z.string(),
  html: z.string().nullable().optional(),
});
export type OutboxMessage = z.infer<typeof outboxMessageSchema>;
export const outboxListSchema = z.object({ messages: z.array(outboxMessageSchema) });

export const studySiteSchema = z.object({ id: z.uuid(), code: z.string(), name: z.string() });
export type StudySite = z.infer<typeof studySiteSchema>;
export const studySiteListSchema = z.object({ sites: z.array(studySiteSchema) });
