import type { Me } from '@counterpoise/contracts/auth';
import type { Role } from '@counterpoise/contracts/common';

/*
 * What the web shows to whom. The server's policy module is the authority; these rules only
 * keep the interface from offering what the server would refuse.
 */

export type TopNavItem = 'studies' | 'audit' | 'users' | 'outbox';

const topNavRoles: Record<TopNavItem, readonly Role[]> = {
  studies: ['admin', 'coordinator', 'statistician', 'sponsor', 'auditor'],
  audit: ['admin', 'auditor', 'statistician'],
  users: ['admin'],
  outbox: ['admin'],
};

export const topNavOrder: readonly TopNavItem[] = ['studies', 'audit', 'users', 'outbox'];

export function rolesOf(me: Pick<Me, 'isAdmin' | 'roles'>): Role[] {
  const roles = new Set<Role>(me.roles);
  if (me.isAdmin) roles.add('admin');
  return [...roles];
}

export function topNavFor(me: Pick<Me, 'isAdmin' | 'roles'>): TopNavItem[] {
  const roles = rolesOf(me);
  return topNavOrder.filter((item) => topNavRoles[item].some((role) => roles.includes(role)));
}

/** Creating a study: administrators, and users who are the statistician of some study (policy `study.create`). */
export function canCreateStudy(me: Pick<Me, 'isAdmin' | 'memberships'>): boolean {
  return me.isAdmin || me.memberships.some((m) => m.role === 'statistician');
}

export type StudyTab = 'overview' | 'participants' | 'outcomes' | 'balance' | 'alerts' | 'analysis' | 'design' | 'audit';

export const studyTabOrder: readonly StudyTab[] = [
  'overview',
  'participants',
  'outcomes',
  'balance',
  'alerts',
  'analysis',
  'design',
  'audit',
];

// Sponsors are blinded: pooled overview only. Coordinators see their own site's participants.
const studyTabRoles: Record<StudyTab, readonly Role[]> = {
  overview: ['admin', 'coordinator', 'statistician', 'sponsor', 'auditor'],
  participants: ['coordinator', 'statistician', 'auditor'],
  // Policy `outcome.write`: coordinators (own sites) and the statistician. Blinded staff can use it.
  outcomes: ['coordinator', 'statistician'],
  balance: ['statistician'],
  alerts: ['statistician'],
  analysis: ['statistician'],
  design: ['statistician', 'admin'],
  audit: ['statistician', 'auditor'],
};

/** Roles the user holds in one study: memberships there, plus the global admin role. */
export function studyRolesOf(me: Pick<Me, 'isAdmin' | 'memberships'>, studyId: string): Role[] {
  const roles = new Set<Role>(me.memberships.filter((m) => m.studyId === studyId).map((m) => m.role));
  if (me.isAdmin) roles.add('admin');
  return [...roles];
}

export function studyTabsFor(me: Pick<Me, 'isAdmin' | 'memberships'>, studyId: string): StudyTab[] {
  const roles = studyRolesOf(me, studyId);
  return studyTabOrder.filter((tab) => studyTabRoles[tab].some((role) => roles.includes(role)));
}

export const roleLabels: Record<Role, string> = {
  admin: 'Administrator',
  coordinator: 'Site coordinator',
  statistician: 'Statistician',
  sponsor: 'Sponsor',
  auditor: 'Auditor',
};
