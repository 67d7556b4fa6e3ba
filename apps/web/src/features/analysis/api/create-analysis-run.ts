import { useMutation, useQueryClient } from '@tanstack/react-query';
import { runResponseSchema, type RunBody, type RunDto } from '@counterpoise/contracts/analysis';
import { api } from '../../../lib/api-client.js';
import { analysisRunsQueryKey } from './get-analysis-runs.js';

export async function createAnalysisRun(studyId: string, body: RunBody): Promise<RunDto> {
  return (
    await api.send('POST', `/studies/${encodeURIComponent(studyId)}/analysis/runs`, body, runResponseSchema)
  ).run;
}

export function useCreateAnalysisRun(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: RunBody) => createAnalysisRun(studyId, body),
    onSuccess: (run) => {
      queryClient.setQueryData([...analysisRunsQueryKey(studyId), run.id], run);
      return queryClient.invalidateQueries({ queryKey: analysisRunsQueryKey(studyId), exact: true });
    },
  });
}
