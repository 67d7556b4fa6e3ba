import type { Request } from 'express';
import { AppError, forbidden } from '../../http/app-error.js';
import type { StudyRoleName } from '../../db/entities.js';

/**
 * The one place that decides who may do what. Every route asks `authorize` (or
 * `requireGlobal`) before it reads or writes anything, and the web reads the same
 * permission lists to decide what to show.
 */

export type SessionMembership = { studyId: string; studyCode: string; role: StudyRoleName; siteIds: string[] };
export type Actor = {
  userId: string;
  email: string;
  displayName: string;
  isAdmin: boolean;
  sessionId: string;
  csrfToken: string;
  sessionExpiresAt: Date;
  memberships: SessionMembership[];
};

export const studyActions = [
  'study.read',
  'study.design',
  'participant.read',
  'participant.write',
  'allocation.read',
  'allocation.unblind',
  'balance.arms',
  'balance.pooled',
  'alerts.manage',
  'analysis.run',
  'audit.read',
  'outcome.write',
] as const;
export type StudyAction = (typeof studyActions)[number];

export const globalActions = ['study.create', 'users.manage', 'outbox.read', 'audit.verify'] as const;
export type GlobalAction = (typeof globalActions)[number];

type StudyRole = StudyRoleName | 'admin';

/** Rows: what each role may do in a study it belongs to. Coordinators are limited to their sites. */
const studyMatrix: Record<StudyRole, readonly StudyAction[]> = {
  admin: ['study.read', 'study.design', 'audit.read'],
  coordinator: ['study.read', 'participant.read', 'participant.write', 'allocation.unblind', 'outcome.write'],
  statistician: [
    'study.read',
    'study.design',
    'participant.read',
    'allocation.read',
    'allocation.unblind',
    'balance.arms',
    'balance.pooled',
    'alerts.manage',
    'analysis.run',
    'audit.read',
    'outcome.write',
  ],
  sponsor: ['study.read', 'balance.pooled'],
  auditor: ['study.read', 'participant.read', 'audit.read'],
};

/** Roles that may see which arm a participant is in. Everyone else is blinded. */
export const UNBLINDED_ROLES: ReadonlySet<StudyRole> = new Set(['statistician']);

export type StudyAccess = {
  studyId: string;
  roles: StudyRole[];
  /** null means every site of the study. */
  siteIds: string[] | null;
  unblinded: boolean;
  permissions: StudyAction[];
};

export function studyAccess(actor: Actor, studyId: string): StudyAccess | null {
  const own = actor.memberships.filter((m) => m.studyId === studyId);
  const roles: StudyRole[] = own.map((m) => m.role);
  if (actor.isAdmin) roles.push('admin');
  if (roles.length === 0) return null;
  const permissions = [...new Set(roles.flatMap((r) => studyMatrix[r]))];
  // Site scope applies only when every role held is site-scoped.
  const siteScoped = roles.every((r) => r === 'coordinator');
  const siteIds = siteScoped ? [...new Set(own.flatMap((m) => m.siteIds))] : null;
  return { studyId, roles, siteIds, unblinded: roles.some((r) => UNBLINDED_ROLES.has(r)), permissions };
}

export function requireActor(req: Request): Actor {
  if (!req.actor) throw new AppError('unauthenticated', 'Sign in to continue');
  return req.actor;
}

/**
 * Checks that the signed-in user may perform `action` in the study (and, when given, at
 * the site). Unknown studies and studies the user does not belong to both answer 404, so
 * that study ids cannot be probed.
 */
export function authorize(req: Request, studyId: string, action: StudyAction, siteId?: string): StudyAccess {
  const actor = requireActor(req);
  const access = studyAccess(actor, studyId);
  if (!access) throw new AppError('not_found', 'Study was not found');
  if (!access.permissions.includes(action)) throw forbidden();
  if (siteId && access.siteIds && !access.siteIds.includes(siteId)) {
    throw forbidden('You can only work with participants of your own site');
  }
  return access;
}

export function requireGlobal(req: Request, action: GlobalAction): Actor {
  const actor = requireActor(req);
  const allowed: Record<GlobalAction, boolean> = {
    'study.create': actor.isAdmin || actor.memberships.some((m) => m.role === 'statistician'),
    'users.manage': actor.isAdmin,
    'outbox.read': actor.isAdmin,
    'audit.verify': actor.isAdmin || actor.memberships.some((m) => m.role === 'auditor' || m.role === 'statistician'),
  };
  if (!allowed[action]) throw forbidden();
  return actor;
}

/** The role recorded in audit entries: the most specific role for the study, if any. */
export function roleLabel(actor: Actor, studyId?: string | null): string {
  const own = studyId ? actor.memberships.filter((m) => m.studyId === studyId).map((m) => m.role) : [];
  if (own.length) return own.join('+');
  if (actor.isAdmin) return 'admin';
  return [...new Set(actor.memberships.map((m) => m.role))].join('+') || 'user';
}
