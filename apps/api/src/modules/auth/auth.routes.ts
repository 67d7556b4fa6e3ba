import {
  inviteAcceptSchema,
  passwordResetConfirmSchema,
  passwordResetRequestSchema,
  signInBodySchema,
  type Me,
} from '@counterpoise/contracts/auth';
import { Router } from 'express';
import type { AppContext } from '../../app-context.js';
import { inTransaction } from '../../db/transaction.js';
import { body } from '../../http/validate.js';
import { appendAudit } from '../audit/audit.service.js';
import { requireActor, type Actor } from '../policy/policy.js';
import { acceptInvite, confirmPasswordReset, requestPasswordReset, signIn } from './auth.service.js';
import { SESSION_COOKIE, cookieOptions, forgetSessions } from './session.js';

export function toMe(actor: Actor): Me {
  const roles = new Set<Me['roles'][number]>(actor.memberships.map((m) => m.role));
  if (actor.isAdmin) roles.add('admin');
  return {
    id: actor.userId,
    email: actor.email,
    displayName: actor.displayName,
    isAdmin: actor.isAdmin,
    roles: [...roles],
    memberships: actor.memberships,
    csrfToken: actor.csrfToken,
    sessionExpiresAt: actor.sessionExpiresAt.toISOString(),
  };
}

export function authRoutes(ctx: AppContext): Router {
  const r = Router();

  r.post('/auth/sign-in', async (req, res) => {
    const { email, password } = body(req, signInBodySchema);
    const session = await signIn(ctx, req, email, password);
    res.cookie(SESSION_COOKIE, session.token, cookieOptions(ctx, session.expiresAt));
    // Read the session back through the same path every later request takes.
    const rows: { id: string; email: string; display_name: string; is_admin: boolean }[] = await ctx.ds.query(
      `SELECT id, email, display_name, is_admin FROM app_user WHERE id = (SELECT user_id FROM user_session WHERE id = $1)`,
      [session.sessionId],
    );
    const memberships: Actor['memberships'] = await ctx.ds.query(
      `SELECT m.study_id AS "studyId", s.code AS "studyCode", m.role, m.site_ids AS "siteIds"
         FROM membership m JOIN study s ON s.id = m.study_id WHERE m.user_id = $1 ORDER BY s.code, m.role`,
      [rows[0]!.id],
    );
    const u = rows[0]!;
    res.json({
      me: toMe({
        userId: u.id,
        email: u.email,
        displayName: u.display_name,
        isAdmin: u.is_admin,
        sessionId: session.sessionId,
        csrfToken: session.csrfToken,
        sessionExpiresAt: session.expiresAt,
        memberships,
      }),
    });
  });

  r.post('/auth/sign-out', async (req, res) => {
    const actor = requireActor(req);
    await inTransaction(ctx.ds, async (tx) => {
      await tx.query(`UPDATE user_session SET revoked_at = now() WHERE id = $1`, [actor.sessionId]);
      await appendAudit(tx, { userId: actor.userId, email: actor.email, role: null, requestId: req.requestId }, [
        { action: 'auth.sign_out', entityType: 'user', entityId: actor.userId, after: { sessionId: actor.sessionId } },
      ]);
    });
    forgetSessions();
    res.clearCookie(SESSION_COOKIE, cookieOptions(ctx));
    res.status(204).end();
  });

  r.get('/me', (req, res) => {
    res.json(toMe(requireActor(req)));
  });

  r.post('/auth/password-reset/request', async (req, res) => {
    const { email } = body(req, passwordResetRequestSchema);
    await requestPasswordReset(ctx, req, email);
    res.status(202).json({ message: 'If the address has an account, a reset link is on its way.' });
  });

  r.post('/auth/password-reset/confirm', async (req, res) => {
    const { token, password } = body(req, passwordResetConfirmSchema);
    await confirmPasswordReset(ctx, req, token, password);
    res.status(204).end();
  });

  r.post('/auth/invite/accept', async (req, res) => {
    const { token, displayName, password } = body(req, inviteAcceptSchema);
    await acceptInvite(ctx, req, token, displayName, password);
    res.status(204).end();
  });

  return r;
}
