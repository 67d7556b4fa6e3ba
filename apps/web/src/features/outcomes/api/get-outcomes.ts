import { queryOptions, useQuery } from '@tanstack/react-query';
import { outcomesOverviewSchema, type OutcomesOverview } from '@counterpoise/contracts/analysis';
import { api } from '../../../lib/api-client.js';

export const outcomesQueryKey = (studyId: string) => ['studies', studyId, 'outcomes'] as const;

/** The outcome the current specification names and its completeness (own sites for site staff). */
export async function getOutcomes(studyId: string, signal?: AbortSignal): Promise<OutcomesOverview> {
  return api.get(`/studies/${encodeURIComponent(studyId)}/outcomes`, outcomesOverviewSchema, signal);
}

export const outcomesQueryOptions = (studyId: string) =>
  queryOptions({
    queryKey: outcomesQueryKey(studyId),
    queryFn: ({ signal }) => getOutcomes(studyId, signal),
  });

export function useOutcomes(studyId: string) {
  return useQuery(outcomesQueryOptions(studyId));
}
