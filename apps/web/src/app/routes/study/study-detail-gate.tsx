import type { ReactNode } from 'react';
import type { StudyDetail } from '../../../lib/study-detail.js';
import { ErrorState, LoadingState } from '../../../components/ui/states.js';
import { useStudyDetail } from '../../../features/study-design/api/get-study-detail.js';

/** Loads the study's design (covariates, sites, permissions) once for the participant pages. */
export function WithStudyDetail({
  studyId,
  children,
}: {
  studyId: string;
  children: (study: StudyDetail) => ReactNode;
}) {
  const detail = useStudyDetail(studyId);
  if (detail.isPending) return <LoadingState label="Loading the study…" />;
  if (detail.isError) return <ErrorState error={detail.error} onRetry={() => void detail.refetch()} />;
  return <>{children(detail.data)}</>;
}
