import { queryOptions, useQuery } from '@tanstack/react-query';
import { studySiteListSchema, type StudySite } from '@counterpoise/contracts/admin';
import { api } from '../../../lib/api-client.js';

export async function getStudySites(studyId: string, signal?: AbortSignal): Promise<StudySite[]> {
  const { sites } = await api.get(
    `/studies/${encodeURIComponent(studyId)}/sites`,
    studySiteListSchema,
    signal,
  );
  return sites;
}

export const studySitesQueryOptions = (studyId: string) =>
  queryOptions({
    queryKey: ['studies', studyId, 'sites'] as const,
    queryFn: ({ signal }) => getStudySites(studyId, signal),
    staleTime: 5 * 60_000,
  });

export function useStudySites(studyId: string | undefined) {
  return useQuery({ ...studySitesQueryOptions(studyId ?? ''), enabled: Boolean(studyId) });
}
