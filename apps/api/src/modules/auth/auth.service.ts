import bcrypt from 'bcryptjs';
import type { Request } from 'express';
import type { AppContext } from '../../app-context.js';
import { inTransaction } from '../../db/transaction.js';
import { AppError } from '../../http/app-error.js';
import { appendAudit, type AuditActor } from '../audit/audit.service.js';
import { consumeToken, issueToken } from './one-time-token.js';
import { forgetSessions, openSession } from './session.js';

const GENERIC_FAILURE = 'The e-mail address or password is not correct';
// Compared against when the account does not exist, so both paths cost one bcrypt check.
const DUMMY_HASH = bcrypt.hashSync('counterpoise-no-such-user', 10);

export const bcryptRounds = (ctx: AppContext) => (ctx.env.NODE_ENV === 'production' ? 12 : 10);

export const anonymousActor = (req: Request, email: string | null = null): AuditActor => ({
  userId: null,
  email,
  role: null,
  requestId: req.requestId,
});

async function recentFailures(ctx: AppContext, email: string, ip: string): Promise<{ byEmail: number; byIp: number }> {
  const rows: { by_email: number; by_ip: number }[] = await ctx.ds.query(
    `SELECT
       (SELECT count(*)::int FROM audit_event WHERE action = 'auth.sign_in_failed' AND entity_id = $1
          AND occurred_at > now() - make_interval(mins => $3)) AS by_email,
       (SELECT count(*)::int FROM audit_event WHERE action = 'auth.sign_in_failed' AND (after ->> 'ip') = $2
          AND occurred_at > now() - make_interval(mins => $3)) AS by_ip`,
    [email, ip, ctx.env.SIGN_IN_WINDOW_MINUTES],
  );
  return { byEmail: rows[0]?.by_email ?? 0, byIp: rows[0]?.by_ip ?? 0 };
}

/**
 * Checks the password and opens a session. Failures are counted from the audit trail
 * itself, so the limit holds across any number of stateless API processes.
 */
export async function signIn(ctx: AppContext, req: Request, email: string, password: string) {
  const ip = req.ip ?? 'unknown';
  const failures = await recentFailures(ctx, email, ip);
  if (failures.byEmail >= ctx.env.SIGN_IN_MAX_FAILURES || failures.byIp >= ctx.env.SIGN_IN_MAX_FAILURES * 10) {
    await inTransaction(ctx.ds, (tx) =>
      appendAudit(tx, anonymousActor(req, email), [
        { action: 'auth.sign_in_rate_limited', entityType: 'user', entityId: email, after: { ip } },
      ]),
    );
    throw new AppError(
      'rate_limited',
      `Too many failed sign-in attempts. Wait ${ctx.env.SIGN_IN_WINDOW_MINUTES} minutes or reset your password.`,
    );
  }
  const users: { id: string; password_hash: string | null; status: string }[] = await ctx.ds.query(
    `SELECT id, password_hash, status FROM app_user WHERE lower(email) = $1`,
    [email],
  );
  const user = users[0];
  const ok = await bcrypt.compare(password, user?.password_hash ?? DUMMY_HASH);
  if (!user || !ok || user.status !== 'active' || !user.password_hash) {
    await inTransaction(ctx.ds, (tx) =>
      appendAudit(tx, anonymousActor(req, email), [
        { action: 'auth.sign_in_failed', entityType: 'user', entityId: email, after: { ip } },
      ]),
    );
    throw new AppError('invalid_credentials', GENERIC_FAILURE);
  }
  return inTransaction(ctx.ds, async (tx) => {
    const session = await openSession(ctx, tx, user.id, { ip, userAgent: req.get('user-agent') });
    await appendAudit(tx, { userId: user.id, email, role: null, requestId: req.requestId }, [
      { action: 'auth.sign_in', entityType: 'user', entityId: user.id, after: { sessionId: session.sessionId, ip } },
    ]);
    return session;
  });
}

/** Always answers the same way, whether or not the address has an account. */
export async function requestPasswordReset(ctx: AppContext, req: Request, email: string): Promise<void> {
  const link = await inTransaction(ctx.ds, async (tx) => {
    const users: { id: string }[] = await tx.query(
      `SELECT id FROM app_user WHERE lower(email) = $1 AND status = 'active'`,
      [email],
    );
    const user = users[0];
    await appendAudit(tx, anonymousActor(req, email), [
      { action: 'auth.password_reset_requested', entityType: 'user', entityId: user?.id ?? email },
    ]);
    if (!user) return null;
    const token = await issueToken(tx, user.id, 'reset');
    return `${ctx.env.APP_ORIGIN}/reset-password?token=${token}`;
  });
  if (link) {
    await ctx.mailer.send({
      to: email,
      subject: 'Reset your Counterpoise password',
      text: `Someone asked to reset the password of this Counterpoise account.\n\nTo choose a new password, open this link within 60 minutes (it works once):\n${link}\n\nIf it was not you, ignore this message; your password stays as it is.`,
    });
  }
}

export async function confirmPasswordReset(ctx: AppContext, req: Request, token: string, password: string) {
  const hash = await bcrypt.hash(password, bcryptRounds(ctx));
  await inTransaction(ctx.ds, async (tx) => {
    const userId = await consumeToken(tx, token, 'reset');
    if (!userId) throw new AppError('token_invalid', 'This reset link has expired or was already used; ask for a new one');
    await tx.query(`UPDATE app_user SET password_hash = $2, updated_at = now() WHERE id = $1`, [userId, hash]);
    // A new password ends every open session of the account.
    await tx.query(`UPDATE user_session SET revoked_at = now() WHERE user_id = $1 AND revoked_at IS NULL`, [userId]);
    await appendAudit(tx, { userId, email: null, role: null, requestId: req.requestId }, [
      { action: 'auth.password_reset', entityType: 'user', entityId: userId },
    ]);
  });
  forgetSessions();
}

export async function acceptInvite(ctx: AppContext, req: Request, token: string, displayName: string, password: string) {
  const hash = await bcrypt.hash(password, bcryptRounds(ctx));
  await inTransaction(ctx.ds, async (tx) => {
    const userId = await consumeToken(tx, token, 'invite');
    if (!userId) throw new AppError('token_invalid', 'This invitation has expired or was already used; ask an administrator for a new one');
    const before: { display_name: string; status: string }[] = await tx.query(
      `SELECT display_name, status FROM app_user WHERE id = $1`,
      [userId],
    );
    await tx.query(
      `UPDATE app_user SET password_hash = $2, display_name = $3, status = 'active', updated_at = now() WHERE id = $1`,
      [userId, hash, displayName],
    );
    await appendAudit(tx, { userId, email: null, role: null, requestId: req.requestId }, [
      {
        action: 'user.invite_accepted',
        entityType: 'user',
        entityId: userId,
        before: { displayName: before[0]?.display_name, status: before[0]?.status },
        after: { displayName, status: 'active' },
      },
    ]);
  });
}
