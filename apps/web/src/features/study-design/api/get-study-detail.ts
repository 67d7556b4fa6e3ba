import { queryOptions, useQuery } from '@tanstack/react-query';
import { designSaveResponseSchema, type StudyDetail } from '@counterpoise/contracts/design';
import { api } from '../../../lib/api-client.js';

export const studyDetailQueryKey = (studyId: string) => ['studies', studyId, 'detail'] as const;

/** The study with its design, as the caller's role may see it (arms are null for blinded roles). */
export async function getStudyDetail(studyId: string, signal?: AbortSignal): Promise<StudyDetail> {
  // Same `{ study }` envelope as the design save answers.
  const { study } = await api.get(
    `/studies/${encodeURIComponent(studyId)}`,
    designSaveResponseSchema,
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
