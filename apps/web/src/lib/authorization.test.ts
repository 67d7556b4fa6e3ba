import { describe, expect, it } from 'vitest';
import type { Me } from '@counterpoise/contracts/auth';
import { canCreateStudy, studyTabsFor, topNavFor } from './authorization.js';

const studyA = '11111111-1111-4111-8111-111111111111';
const studyB = '22222222-2222-4222-8222-222222222222';

function me(
  partial: Partial<Pick<Me, 'isAdmin' | 'roles' | 'memberships'>>,
): Pick<Me, 'isAdmin' | 'roles' | 'memberships'> {
  return { isAdmin: false, roles: [], memberships: [], ...partial };
}

// Expected sets follow the role table of the product brief (issue 2, items 6 and 9).
describe('topNavFor', () => {
  it.each([
    ['admin', me({ isAdmin: true, roles: ['admin'] }), ['studies', 'audit', 'users', 'outbox']],
    ['coordinator', me({ roles: ['coordinator'] }), ['studies']],
    ['statistician', me({ roles: ['statistician'] }), ['studies', 'audit']],
    ['sponsor', me({ roles: ['sponsor'] }), ['studies']],
    ['auditor', me({ roles: ['auditor'] }), ['studies', 'audit']],
  ] as const)(
    'when the user is %s, then the top navigation is exactly the allowed set',
    (_name, user, expected) => {
      expect(topNavFor(user)).toEqual(expected);
    },
  );

  it('when isAdmin is set without the role in the list, then admin items still show', () => {
    expect(topNavFor(me({ isAdmin: true, roles: [] }))).toContain('users');
  });
});

describe('studyTabsFor', () => {
  const membership = (studyId: string, role: 'coordinator' | 'statistician' | 'sponsor' | 'auditor') => ({
    studyId,
    studyCode: 'X',
    role,
    siteIds: [],
  });

  it.each([
    [
      'coordinator',
      me({ memberships: [membership(studyA, 'coordinator')] }),
      ['overview', 'participants', 'outcomes'],
    ],
    [
      'statistician',
      me({ memberships: [membership(studyA, 'statistician')] }),
      ['overview', 'participants', 'outcomes', 'balance', 'alerts', 'analysis', 'design', 'audit'],
    ],
    ['sponsor', me({ memberships: [membership(studyA, 'sponsor')] }), ['overview']],
    ['auditor', me({ memberships: [membership(studyA, 'auditor')] }), ['overview', 'participants', 'audit']],
    ['admin', me({ isAdmin: true }), ['overview', 'design']],
  ] as const)(
    'when the user is %s of the study, then the tabs are exactly the allowed set',
    (_n, user, expected) => {
      expect(studyTabsFor(user, studyA)).toEqual(expected);
    },
  );

  it('when the role is held in another study only, then nothing is offered here', () => {
    expect(studyTabsFor(me({ memberships: [membership(studyB, 'statistician')] }), studyA)).toEqual([]);
  });
});

// Mirrors the API's policy `study.create` (apps/api/src/modules/policy/policy.ts).
describe('canCreateStudy', () => {
  const member = (role: 'coordinator' | 'statistician' | 'sponsor' | 'auditor') => ({
    studyId: studyA,
    studyCode: 'X',
    role,
    siteIds: [],
  });

  it.each([
    ['an administrator without memberships', me({ isAdmin: true }), true],
    ['the statistician of one study', me({ memberships: [member('sponsor'), member('statistician')] }), true],
    ['a site coordinator', me({ memberships: [member('coordinator')] }), false],
    ['a sponsor', me({ memberships: [member('sponsor')] }), false],
    ['an auditor', me({ memberships: [member('auditor')] }), false],
    ['a user with no study', me({}), false],
  ] as const)('when the user is %s, then creating a study is offered: %s', (_n, user, expected) => {
    expect(canCreateStudy(user)).toBe(expected);
  });
});
