import { z } from 'zod';

export const auditEventSchema = z.object({
  seq: z.number().int(),
  id: z.uuid(),
  occurredAt: z.string(),
  actorId: z.uuid().nullable(),
  actorEmail: z.string().nullable(),
  actorRole: z.string().nullable(),
  action: z.string(),
  entityType: z.string(),
  entityId: z.string().nullable(),
  studyId: z.uuid().nullable(),
  siteId: z.uuid().nullable(),
  before: z.unknown().nullable(),
  after: z.unknown().nullable(),
  reason: z.string().nullable(),
  requestId: z.string().nullable(),
  hash: z.string(),
  prevHash: z.string(),
});
export type AuditEventDto = z.infer<typeof auditEventSchema>;

export const auditQuerySchema = z.object({
  studyId: z.uuid().optional(),
  action: z.string().max(100).optional(),
  entityType: z.string().max(100).optional(),
  entityId: z.string().max(200).optional(),
  actor: z.string().max(254).optional(),
  from: z.iso.datetime({ offset: true }).optional(),
  to: z.iso.datetime({ offset: true }).optional(),
  beforeSeq: z.coerce.number().int().positive().optional(),
  limit: z.coerce.number().int().min(1).max(500).default(100),
});
export type AuditQuery = z.infer<typeof auditQuerySchema>;

export const auditPageSchema = z.object({ events: z.array(auditEventSchema), nextBeforeSeq: z.number().int().nullable() });

export const auditVerifySchema = z.object({
  ok: z.boolean(),
  checked: z.number().int(),
  firstBroken: z
    .object({ seq: z.number().int(), id: z.uuid(), problem: z.enum(['hash_mismatch', 'chain_broken']) })
    .nullable(),
  lastHash: z.string().nullable(),
});
export type AuditVerify = z.infer<typeof auditVerifySchema>;
