import { useMutation, useQueryClient } from '@tanstack/react-query';
import { specDtoSchema, type LockBody, type SpecDto } from '@counterpoise/contracts/analysis';
import { z } from 'zod';
import { api } from '../../../lib/api-client.js';
import { analysisQueryKey } from './get-analysis-spec.js';

const lockedSchema = z.object({ spec: specDtoSchema, note: z.string() });

export async function lockAnalysisSpec(studyId: string, body: LockBody): Promise<SpecDto> {
  return (
    await api.send('POST', `/studies/${encodeURIComponent(studyId)}/analysis/spec/lock`, body, lockedSchema)
  ).spec;
}

export function useLockAnalysisSpec(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: LockBody) => lockAnalysisSpec(studyId, body),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: analysisQueryKey(studyId) }),
  });
}
