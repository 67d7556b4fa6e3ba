import { auditQuerySchema, type AuditEventDto, type AuditQuery } from '@counterpoise/contracts/audit';
import { Router, type Request } from 'express';
import type { AppContext } from '../../app-context.js';
import { toCsv } from '../../http/csv.js';
import { query } from '../../http/validate.js';
import { forbidden } from '../../http/app-error.js';
import { requireActor, requireGlobal, studyAccess } from '../policy/policy.js';
import { verifyAuditChain } from './audit-verify.js';

type Visibility = { sql: string; params: unknown[] };

/**
 * What part of the trail the reader may see: their studies (allocation-revealing entries
 * only where they are unblinded), and account-level entries for administrators and auditors.
 */
function visibility(req: Request, first: number): Visibility | null {
  const actor = requireActor(req);
  const studyIds = [...new Set(actor.memberships.map((m) => m.studyId))];
  const full: string[] = [];
  const blinded: string[] = [];
  for (const id of studyIds) {
    const access = studyAccess(actor, id);
    if (!access?.permissions.includes('audit.read')) continue;
    (access.unblinded ? full : blinded).push(id);
  }
  const seesGlobal = actor.isAdmin || actor.memberships.some((m) => m.role === 'auditor');
  if (actor.isAdmin) {
    return { sql: `(NOT reveals_allocation OR study_id = ANY($${first}::uuid[]))`, params: [full] };
  }
  if (!full.length && !blinded.length && !seesGlobal) return null;
  return {
    sql: `(study_id = ANY($${first}::uuid[]) OR (study_id = ANY($${first + 1}::uuid[]) AND NOT reveals_allocation)
           OR (study_id IS NULL AND $${first + 2}::boolean))`,
    params: [full, blinded, seesGlobal],
  };
}

const COLUMNS = `seq::int AS seq, id, occurred_at AS "occurredAt", actor_id AS "actorId", actor_email AS "actorEmail",
  actor_role AS "actorRole", action, entity_type AS "entityType", entity_id AS "entityId", study_id AS "studyId",
  site_id AS "siteId", before, after, reason, request_id AS "requestId", hash, prev_hash AS "prevHash"`;

function filters(q: AuditQuery, params: unknown[]): string[] {
  const where: string[] = [];
  const add = (sql: string, value: unknown) => {
    params.push(value);
    where.push(sql.replace('?', `$${params.length}`));
  };
  if (q.studyId) add('study_id = ?', q.studyId);
  if (q.action) add('action LIKE ?', `${q.action.replace(/[%_]/g, '\\$&')}%`);
  if (q.entityType) add('entity_type = ?', q.entityType);
  if (q.entityId) add('entity_id = ?', q.entityId);
  if (q.actor) add('actor_email ILIKE ?', `%${q.actor.replace(/[%_]/g, '\\$&')}%`);
  if (q.from) add('occurred_at >= ?', q.from);
  if (q.to) add('occurred_at <= ?', q.to);
  if (q.beforeSeq) add('seq < ?', q.beforeSeq);
  return where;
}

export async function readAudit(ctx: AppContext, req: Request, q: AuditQuery, limit: number) {
  const vis = visibility(req, 1);
  if (!vis) throw forbidden('Your role does not include reading the audit trail');
  const params = [...vis.params];
  const where = [vis.sql, ...filters(q, params)];
  params.push(limit);
  const rows: (Omit<AuditEventDto, 'occurredAt'> & { occurredAt: Date })[] = await ctx.ds.query(
    `SELECT ${COLUMNS} FROM audit_event WHERE ${where.join(' AND ')} ORDER BY seq DESC LIMIT $${params.length}`,
    params,
  );
  return rows.map((r) => ({ ...r, occurredAt: new Date(r.occurredAt).toISOString() }));
}

export function auditRoutes(ctx: AppContext): Router {
  const r = Router();

  r.get('/audit', async (req, res) => {
    const q = query(req, auditQuerySchema);
    const events = await readAudit(ctx, req, q, q.limit);
    res.json({ events, nextBeforeSeq: events.length === q.limit ? events[events.length - 1]!.seq : null });
  });

  r.get('/audit/verify', async (req, res) => {
    requireGlobal(req, 'audit.verify');
    res.json(await verifyAuditChain(ctx.ds));
  });

  r.get('/audit/export.csv', async (req, res) => {
    const q = query(req, auditQuerySchema.omit({ limit: true }));
    const events = await readAudit(ctx, req, { ...q, limit: 50_000 }, 50_000);
    const header = ['seq', 'occurred_at_utc', 'actor_email', 'actor_role', 'action', 'entity_type', 'entity_id',
      'study_id', 'site_id', 'before', 'after', 'reason', 'request_id', 'prev_hash', 'hash'];
    const rows = events.map((e) => [e.seq, e.occurredAt, e.actorEmail, e.actorRole, e.action, e.entityType, e.entityId,
      e.studyId, e.siteId, e.before, e.after, e.reason, e.requestId, e.prevHash, e.hash]);
    res.setHeader('Content-Type', 'text/csv; charset=utf-8');
    res.setHeader('Content-Disposition', 'attachment; filename="counterpoise-audit-trail.csv"');
    res.send(toCsv(header, rows));
  });

  return r;
}
