/** The one source of in-app URLs. `path` is the router pattern; `href` builds a link. */
export const paths = {
  home: { path: '/', href: () => '/' },
  auth: {
    signIn: {
      path: '/sign-in',
      href: (next?: string) => (next ? `/sign-in?next=${encodeURIComponent(next)}` : '/sign-in'),
    },
    forgotPassword: { path: '/forgot-password', href: () => '/forgot-password' },
    // Path fixed by the e-mailed link: `${APP_ORIGIN}/reset-password?token=...`.
    resetPassword: { path: '/reset-password', href: () => '/reset-password' },
    // Path fixed by the e-mailed link: `${APP_ORIGIN}/accept-invite?token=...`.
    acceptInvite: { path: '/accept-invite', href: () => '/accept-invite' },
  },
  studies: {
    list: { path: '/studies', href: () => '/studies' },
    create: { path: '/studies/new', href: () => '/studies/new' },
    study: {
      path: '/studies/:studyId',
      href: (studyId: string) => `/studies/${encodeURIComponent(studyId)}`,
    },
    tab: {
      href: (studyId: string, tab: string) =>
        tab === ''
          ? `/studies/${encodeURIComponent(studyId)}`
          : `/studies/${encodeURIComponent(studyId)}/${tab}`,
    },
  },
  participants: {
    enroll: {
      path: 'participants/enroll',
      href: (studyId: string) => `/studies/${encodeURIComponent(studyId)}/participants/enroll`,
    },
    import: {
      path: 'participants/import',
      href: (studyId: string) => `/studies/${encodeURIComponent(studyId)}/participants/import`,
    },
    detail: {
      path: 'participants/:participantId',
      href: (studyId: string, participantId: string) =>
        `/studies/${encodeURIComponent(studyId)}/participants/${encodeURIComponent(participantId)}`,
    },
  },
  audit: { path: '/audit', href: () => '/audit' },
  admin: {
    users: { path: '/admin/users', href: () => '/admin/users' },
    outbox: { path: '/admin/outbox', href: () => '/admin/outbox' },
  },
} as const;

/** Only same-app paths are accepted as a post-sign-in destination (no open redirect). */
export function safeNextPath(next: string | null): string {
  if (!next || !next.startsWith('/') || next.startsWith('//') || next.startsWith('/\\')) {
    return paths.studies.list.href();
  }
  return next;
}
