import type { StudyTab } from '../../../lib/authorization.js';

/** Label and URL segment of each study section ('' is the overview at /studies/:studyId). */
export const studyTabs: Record<StudyTab, { label: string; segment: string; analysis: boolean }> = {
  overview: { label: 'Overview', segment: '', analysis: false },
  participants: { label: 'Participants', segment: 'participants', analysis: false },
  outcomes: { label: 'Outcomes', segment: 'outcomes', analysis: false },
  balance: { label: 'Balance', segment: 'balance', analysis: true },
  alerts: { label: 'Alerts', segment: 'alerts', analysis: true },
  analysis: { label: 'Analysis', segment: 'analysis', analysis: true },
  design: { label: 'Design', segment: 'design', analysis: false },
  audit: { label: 'Audit', segment: 'audit', analysis: false },
};
