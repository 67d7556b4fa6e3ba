import { useOutletContext } from 'react-router-dom';
import type { StudySummary } from '@counterpoise/contracts/studies';
import type { StudyTab } from '../../../lib/authorization.js';

export type StudyOutletContext = { study: StudySummary; tabs: StudyTab[] };

/** For pages under /studies/:studyId: the study and the tabs the user may open. */
export function useStudyContext(): StudyOutletContext {
  return useOutletContext<StudyOutletContext>();
}
