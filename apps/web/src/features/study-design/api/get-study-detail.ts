import { queryOptions, useQuery } from '@tanstack/react-query';
import { studyDetailResponseSchema, type StudyDetail } from '../../../lib/study-detail.js';
import { api } from '../../../lib/api-client.js';

export const studyDetailQueryKey = (studyId: string) => ['studies', studyId, 'detail'] as const;

/** The study with its design, as the caller's role may see it (arms are null for blinded roles). */
export async function getStudyDetail(studyId: string, signal?: AbortSignal): Promise<StudyDetail> {
  // Same `{ study }` envelope as the design save answers.
  const { study } = await api.get(
    `/studies/${encodeURIComponent(studyId)}`,
    studyDetailResponseSchema,
    signal,
  );
  return study;
}

export const studyDetailQueryOptions = (studyId: string) =>
  queryOptions({
    queryKey: studyDetailQueryKey(studyId),
    queryFn: ({ signal }) => getStudyDetail(studyId, signal),
  });

export function useStudyDetail(studyId: string) {
  return useQuery(studyDetailQueryOptions(studyId));
}
