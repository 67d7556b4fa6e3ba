import { inviteBodySchema, membershipUpdateSchema } from '@counterpoise/contracts/auth';
import { Router } from 'express';
import { z } from 'zod';
import type { AppContext } from '../../app-context.js';
import { inTransaction } from '../../db/transaction.js';
import { AppError, notFound } from '../../http/app-error.js';
import { body, params } from '../../http/validate.js';
import { appendAudit } from '../audit/audit.service.js';
import { issueToken } from '../auth/one-time-token.js';
import { forgetSessions } from '../auth/session.js';
import { readOutbox } from '../../mail/fake-smtp.js';
import { requireGlobal, roleLabel, type Actor } from '../policy/policy.js';
import type { EntityManager } from 'typeorm';

type MembershipInput = { studyId: string; role: string; siteIds: string[] };

async function usersWithMemberships(q: Pick<EntityManager, 'query'>, userId?: string) {
  return q.query(
    `SELECT u.id, u.email, u.display_name AS "displayName", u.is_admin AS "isAdmin", u.status,
            COALESCE((SELECT json_agg(json_build_object('studyId', m.study_id, 'studyCode', s.code, 'role', m.role,
                       'siteIds', m.site_ids) ORDER BY s.code, m.role)
               FROM membership m JOIN study s ON s.id = m.study_id WHERE m.user_id = u.id), '[]') AS memberships
       FROM app_user u ${userId ? 'WHERE u.id = $1' : ''} ORDER BY lower(u.email)`,
    userId ? [userId] : [],
  );
}

/** Checks that every site named belongs to its study and that only coordinators are site-scoped. */
async function checkMemberships(tx: EntityManager, memberships: MembershipInput[]) {
  for (const [i, m] of memberships.entries()) {
    const study: { id: string }[] = await tx.query(`SELECT id FROM study WHERE id = $1`, [m.studyId]);
    if (!study.length) {
      throw new AppError('validation_failed', 'A study in the list does not exist', {
        issues: [{ path: ['memberships', String(i), 'studyId'], message: 'No such study' }],
      });
    }
    if (m.role === 'coordinator' && m.siteIds.length === 0) {
      throw new AppError('validation_failed', 'A coordinator needs at least one site', {
        issues: [{ path: ['memberships', String(i), 'siteIds'], message: 'Choose at least one site' }],
      });
    }
    if (m.role !== 'coordinator' && m.siteIds.length > 0) {
      throw new AppError('validation_failed', 'Only coordinators are limited to sites', {
        issues: [{ path: ['memberships', String(i), 'siteIds'], message: 'Leave empty for this role' }],
      });
    }
    const sites: { n: number }[] = await tx.query(
      `SELECT count(*)::int AS n FROM site WHERE study_id = $1 AND id = ANY($2::uuid[])`,
      [m.studyId, m.siteIds],
    );
    if (sites[0]!.n !== new Set(m.siteIds).size) {
      throw new AppError('validation_failed', 'A site in the list does not belong to its study', {
        issues: [{ path: ['memberships', String(i), 'siteIds'], message: 'Unknown site for this study' }],
      });
    }
  }
}

async function replaceMemberships(tx: EntityManager, userId: string, memberships: MembershipInput[]) {
  await tx.query(`DELETE FROM membership WHERE user_id = $1`, [userId]);
  for (const m of memberships) {
    await tx.query(`INSERT INTO membership (user_id, study_id, role, site_ids) VALUES ($1, $2, $3, $4::uuid[])`, [
      userId,
      m.studyId,
      m.role,
      m.siteIds,
    ]);
  }
}

const actorOf = (actor: Actor, requestId: string) => ({
  userId: actor.userId,
  email: actor.email,
  role: roleLabel(actor),
  requestId,
});

export function adminRoutes(ctx: AppContext): Router {
  const r = Router();

  r.get('/admin/users', async (req, res) => {
    requireGlobal(req, 'users.manage');
    res.json({ users: await usersWithMemberships(ctx.ds) });
  });

  r.post('/admin/users/invite', async (req, res) => {
    const actor = requireGlobal(req, 'users.manage');
    const input = body(req, inviteBodySchema);
    const { userId, token } = await inTransaction(ctx.ds, async (tx) => {
      const existing: { id: string }[] = await tx.query(`SELECT id FROM app_user WHERE lower(email) = $1`, [input.email]);
      if (existing.length) throw new AppError('conflict', 'An account with this e-mail address already exists');
      await checkMemberships(tx, input.memberships);
      const rows: { id: string }[] = await tx.query(
        `INSERT INTO app_user (email, display_name, is_admin, status) VALUES ($1, $2, $3, 'invited') RETURNING id`,
        [input.email, input.displayName, input.isAdmin],
      );
      const id = rows[0]!.id;
      await replaceMemberships(tx, id, input.memberships);
      const token = await issueToken(tx, id, 'invite');
      await appendAudit(tx, actorOf(actor, req.requestId), [
        { action: 'user.invited', entityType: 'user', entityId: id, after: input },
        ...input.memberships.map((m) => ({
          action: 'membership.granted',
          entityType: 'membership',
          entityId: id,
          studyId: m.studyId,
          after: m,
        })),
      ]);
      return { userId: id, token };
    });
    const link = `${ctx.env.APP_ORIGIN}/accept-invite?token=${token}`;
    const emailSent = await ctx.mailer.send({
      to: input.email,
      subject: 'You are invited to Counterpoise',
      text: `${actor.displayName} invited you to Counterpoise, the study registry and baseline-balance monitor.\n\nOpen this link within 7 days to choose your password (it works once):\n${link}`,
    });
    const users = await usersWithMemberships(ctx.ds, userId);
    res.status(201).json({ user: users[0], emailSent });
  });

  r.patch('/admin/users/:userId', async (req, res) => {
    const actor = requireGlobal(req, 'users.manage');
    const { userId } = params(req, z.object({ userId: z.uuid() }));
    const input = body(req, membershipUpdateSchema);
    if (userId === actor.userId && (input.isAdmin === false || input.status === 'disabled')) {
      throw new AppError('conflict', 'You cannot remove your own administrator access or disable yourself');
    }
    await inTransaction(ctx.ds, async (tx) => {
      const before = (await usersWithMemberships(tx, userId))[0];
      if (!before) throw notFound('User');
      if (input.memberships) await checkMemberships(tx, input.memberships);
      await tx.query(
        `UPDATE app_user SET is_admin = COALESCE($2, is_admin), status = COALESCE($3, status), updated_at = now()
          WHERE id = $1`,
        [userId, input.isAdmin ?? null, input.status ?? null],
      );
      if (input.memberships) await replaceMemberships(tx, userId, input.memberships);
      // Role changes take effect at once: the user's sessions are ended.
      await tx.query(`UPDATE user_session SET revoked_at = now() WHERE user_id = $1 AND revoked_at IS NULL`, [userId]);
      const after = (await usersWithMemberships(tx, userId))[0];
      await appendAudit(tx, actorOf(actor, req.requestId), [
        { action: 'user.roles_changed', entityType: 'user', entityId: userId, before, after, reason: input.reason },
      ]);
    });
    forgetSessions();
    res.json({ user: (await usersWithMemberships(ctx.ds, userId))[0] });
  });

  r.get('/admin/outbox', async (req, res) => {
    requireGlobal(req, 'outbox.read');
    if (ctx.env.NODE_ENV === 'production') throw notFound('The local outbox');
    res.json({ messages: await readOutbox(ctx.env.outboxDir) });
  });

  return r;
}
