import { useMutation, useQueryClient } from '@tanstack/react-query';
import {
  outcomesPutResponseSchema,
  type OutcomesPutBody,
  type OutcomesPutResponse,
} from '@counterpoise/contracts/analysis';
import { api } from '../../../lib/api-client.js';
import { outcomesQueryKey } from './get-outcomes.js';

/** Records rows (at most 5,000) in one atomic request; a correction needs `reason`. */
export async function recordOutcomes(studyId: string, body: OutcomesPutBody): Promise<OutcomesPutResponse> {
  return api.send('PUT', `/studies/${encodeURIComponent(studyId)}/outcomes`, body, outcomesPutResponseSchema);
}

/** Completeness here and on the Analysis tab changes with every recorded value. */
export function invalidateOutcomeViews(queryClient: ReturnType<typeof useQueryClient>, studyId: string) {
  void queryClient.invalidateQueries({ queryKey: outcomesQueryKey(studyId) });
  void queryClient.invalidateQueries({ queryKey: ['studies', studyId, 'analysis'] });
}

export function useRecordOutcomes(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: OutcomesPutBody) => recordOutcomes(studyId, body),
    onSuccess: () => invalidateOutcomeViews(queryClient, studyId),
  });
}
