import { queryOptions, useQuery } from '@tanstack/react-query';
import {
  runListSchema,
  runResponseSchema,
  type RunDto,
  type RunList,
} from '@counterpoise/contracts/analysis';
import { api } from '../../../lib/api-client.js';
import { analysisQueryKey } from './get-analysis-spec.js';

export const analysisRunsQueryKey = (studyId: string) => [...analysisQueryKey(studyId), 'runs'] as const;

export async function getAnalysisRuns(studyId: string, signal?: AbortSignal): Promise<RunList> {
  return api.get(`/studies/${encodeURIComponent(studyId)}/analysis/runs`, runListSchema, signal);
}

export async function getAnalysisRun(studyId: string, runId: string, signal?: AbortSignal): Promise<RunDto> {
  return (
    await api.get(
      `/studies/${encodeURIComponent(studyId)}/analysis/runs/${encodeURIComponent(runId)}`,
      runResponseSchema,
      signal,
    )
  ).run;
}

export const analysisRunsQueryOptions = (studyId: string) =>
  queryOptions({
    queryKey: analysisRunsQueryKey(studyId),
    queryFn: ({ signal }) => getAnalysisRuns(studyId, signal),
  });

export const analysisRunQueryOptions = (studyId: string, runId: string) =>
  queryOptions({
    queryKey: [...analysisRunsQueryKey(studyId), runId] as const,
    queryFn: ({ signal }) => getAnalysisRun(studyId, runId, signal),
    // A stored run never changes.
    staleTime: Number.POSITIVE_INFINITY,
  });

export function useAnalysisRuns(studyId: string) {
  return useQuery(analysisRunsQueryOptions(studyId));
}

export function useAnalysisRun(studyId: string, runId: string | null) {
  return useQuery({ ...analysisRunQueryOptions(studyId, runId ?? ''), enabled: runId !== null });
}
