import { queryOptions, useQuery } from '@tanstack/react-query';
import { specResponseSchema, type SpecResponse } from '@counterpoise/contracts/analysis';
import { api } from '../../../lib/api-client.js';

export const analysisQueryKey = (studyId: string) => ['studies', studyId, 'analysis'] as const;
export const analysisSpecQueryKey = (studyId: string) => [...analysisQueryKey(studyId), 'spec'] as const;

export async function getAnalysisSpec(studyId: string, signal?: AbortSignal): Promise<SpecResponse> {
  return api.get(`/studies/${encodeURIComponent(studyId)}/analysis/spec`, specResponseSchema, signal);
}

export const analysisSpecQueryOptions = (studyId: string) =>
  queryOptions({
    queryKey: analysisSpecQueryKey(studyId),
    queryFn: ({ signal }) => getAnalysisSpec(studyId, signal),
  });

export function useAnalysisSpec(studyId: string) {
  return useQuery(analysisSpecQueryOptions(studyId));
}
