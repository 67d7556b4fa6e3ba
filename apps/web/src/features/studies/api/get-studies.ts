import { queryOptions, useQuery } from '@tanstack/react-query';
import { studyListSchema, type StudySummary } from '@counterpoise/contracts/studies';
import { api } from '../../../lib/api-client.js';

export const studiesQueryKey = ['studies'] as const;

export async function getStudies(signal?: AbortSignal): Promise<StudySummary[]> {
  const { studies } = await api.get('/studies', studyListSchema, signal);
  return studies;
}

export const studiesQueryOptions = () =>
  queryOptions({ queryKey: studiesQueryKey, queryFn: ({ signal }) => getStudies(signal) });

export function useStudies() {
  return useQuery(studiesQueryOptions());
}

/** One study out of the list the user may see; there is no separate per-study endpoint yet. */
export function useStudy(studyId: string) {
  return useQuery({
    ...studiesQueryOptions(),
    select: (studies) => studies.find((s) => s.id === studyId) ?? null,
  });
}
