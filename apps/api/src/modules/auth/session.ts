import { randomBytes, timingSafeEqual } from 'node:crypto';
import type { CookieOptions, RequestHandler } from 'express';
import { SignJWT, jwtVerify } from 'jose';
import type { EntityManager } from 'typeorm';
import type { AppContext } from '../../app-context.js';
import { AppError } from '../../http/app-error.js';
import type { Actor, SessionMembership } from '../policy/policy.js';

export const SESSION_COOKIE = 'cp_session';
const ISSUER = 'counterpoise';

const key = (secret: string) => new TextEncoder().encode(secret);

export function cookieOptions(ctx: AppContext, expires?: Date): CookieOptions {
  return {
    httpOnly: true,
    sameSite: 'strict',
    secure: ctx.env.NODE_ENV === 'production',
    path: '/',
    ...(expires ? { expires } : {}),
  };
}

/** Creates a server-side session row and the signed token that names it. */
export async function openSession(
  ctx: AppContext,
  tx: EntityManager,
  userId: string,
  meta: { ip?: string | undefined; userAgent?: string | undefined },
): Promise<{ token: string; sessionId: string; expiresAt: Date; csrfToken: string }> {
  const expiresAt = new Date(Date.now() + ctx.env.SESSION_TTL_MINUTES * 60_000);
  const csrfToken = randomBytes(24).toString('base64url');
  const rows: { id: string }[] = await tx.query(
    `INSERT INTO user_session (user_id, csrf_token, expires_at, ip, user_agent) VALUES ($1, $2, $3, $4, $5) RETURNING id`,
    [userId, csrfToken, expiresAt, meta.ip ?? null, meta.userAgent?.slice(0, 300) ?? null],
  );
  const sessionId = rows[0]!.id;
  const token = await new SignJWT({ sid: sessionId })
    .setProtectedHeader({ alg: 'HS256' })
    .setSubject(userId)
    .setIssuer(ISSUER)
    .setIssuedAt()
    .setExpirationTime(Math.floor(expiresAt.getTime() / 1000))
    .sign(key(ctx.env.JWT_SECRET));
  return { token, sessionId, expiresAt, csrfToken };
}

type SessionRow = {
  session_id: string;
  csrf_token: string;
  expires_at: Date;
  user_id: string;
  email: string;
  display_name: string;
  is_admin: boolean;
  memberships: { studyId: string; studyCode: string; role: SessionMembership['role']; siteIds: string[] }[];
};

/*
 * A session read from the database is reused by this process for up to SESSION_CACHE_MS, so a
 * dashboard that polls does not pay a lookup on every request. Sessions this process ends are
 * forgotten at once (forgetSessions); an end made by another API process (sign-out, password
 * reset, role change) takes effect there within that time.
 */
const SESSION_CACHE_MS = 2000;
const sessionCache = new Map<string, { actor: Actor; until: number }>();
/** Bumped by forgetSessions: a lookup that started before it does not cache what it read. */
let generation = 0;
const sessionLookups = new Map<string, Promise<Actor | null>>();

/** Called after any change that ends sessions, so this process never serves a revoked one. */
export function forgetSessions(): void {
  sessionCache.clear();
  sessionLookups.clear();
  generation++;
}

/**
 * Reads the session cookie, if any, and attaches the actor. An invalid, expired, forged or
 * revoked token is treated as no session; routes that need one answer 401.
 */
export function sessionMiddleware(ctx: AppContext): RequestHandler {
  return async (req, _res, next) => {
    const token: unknown = req.cookies?.[SESSION_COOKIE];
    if (typeof token !== 'string' || token.length === 0) return next();
    const now = Date.now();
    const hit = sessionCache.get(token);
    if (hit && hit.until > now && hit.actor.sessionExpiresAt.getTime() > now) {
      req.actor = hit.actor;
      return next();
    }
    // One lookup per token at a time: requests that arrive while it runs share its answer
    // (a dashboard's parallel requests would otherwise all query when the cached entry ends).
    let lookup = sessionLookups.get(token);
    if (!lookup) {
      const started = lookUpSession(ctx, token).finally(() => {
        if (sessionLookups.get(token) === started) sessionLookups.delete(token);
      });
      lookup = started;
      sessionLookups.set(token, started);
    }
    const actor = await lookup;
    if (actor) req.actor = actor;
    next();
  };
}

async function lookUpSession(ctx: AppContext, token: string): Promise<Actor | null> {
  const now = Date.now();
  const startedIn = generation;
  let sid: string;
  let sub: string;
  try {
    const { payload } = await jwtVerify(token, key(ctx.env.JWT_SECRET), { issuer: ISSUER, algorithms: ['HS256'] });
    if (typeof payload.sid !== 'string' || typeof payload.sub !== 'string') return null;
    sid = payload.sid;
    sub = payload.sub;
  } catch {
    return null;
  }
  const rows: SessionRow[] = await ctx.ds.query(
    `SELECT s.id AS session_id, s.csrf_token, s.expires_at, u.id AS user_id, u.email, u.display_name, u.is_admin,
            COALESCE((SELECT json_agg(json_build_object('studyId', m.study_id, 'studyCode', st.code,
                       'role', m.role, 'siteIds', m.site_ids) ORDER BY st.code, m.role)
                FROM membership m JOIN study st ON st.id = m.study_id WHERE m.user_id = u.id), '[]') AS memberships
       FROM user_session s JOIN app_user u ON u.id = s.user_id
      WHERE s.id = $1 AND s.user_id = $2 AND s.revoked_at IS NULL AND s.expires_at > now() AND u.status = 'active'`,
    [sid, sub],
  );
  const row = rows[0];
  if (!row) return null;
  const actor: Actor = {
    userId: row.user_id,
    email: row.email,
    displayName: row.display_name,
    isAdmin: row.is_admin,
    sessionId: row.session_id,
    csrfToken: row.csrf_token,
    sessionExpiresAt: new Date(row.expires_at),
    memberships: row.memberships,
  };
  // A lookup that started before forgetSessions() ran must not put the old answer back.
  if (generation === startedIn) {
    if (sessionCache.size > 10_000) sessionCache.clear();
    sessionCache.set(token, { actor, until: now + SESSION_CACHE_MS });
  }
  return actor;
}

const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);

function sameToken(a: string, b: string): boolean {
  const x = Buffer.from(a);
  const y = Buffer.from(b);
  return x.length === y.length && timingSafeEqual(x, y);
}

/**
 * CSRF defence for cookie sessions: unsafe requests of a signed-in user must echo the
 * session's token in `X-CSRF-Token`, and unsafe requests must come from our own origin when
 * the browser says where they come from. The SameSite=Strict cookie is the first line.
 */
export function csrfMiddleware(ctx: AppContext): RequestHandler {
  const ownOrigin = new URL(ctx.env.APP_ORIGIN).origin;
  return (req, _res, next) => {
    if (SAFE_METHODS.has(req.method)) return next();
    const origin = req.get('origin');
    if (origin && origin !== ownOrigin && !isLoopbackSameHost(origin, req.get('host'))) {
      return next(new AppError('csrf_failed', 'This request came from another site and was refused'));
    }
    if (!req.actor) return next();
    const sent = req.get('x-csrf-token');
    if (!sent || !sameToken(sent, req.actor.csrfToken)) {
      return next(new AppError('csrf_failed', 'The security token is missing or out of date; reload the page'));
    }
    next();
  };
}

function isLoopbackSameHost(origin: string, host: string | undefined): boolean {
  try {
    return new URL(origin).host === host;
  } catch {
    return false;
  }
}
