import { useMutation, useQueryClient } from '@tanstack/react-query';
import { specDtoSchema, type SpecDto, type SpecPutBody } from '@counterpoise/contracts/analysis';
import { z } from 'zod';
import { api } from '../../../lib/api-client.js';
import { analysisQueryKey } from './get-analysis-spec.js';

const savedSchema = z.object({ spec: specDtoSchema, note: z.string() });

export async function saveAnalysisSpec(studyId: string, body: SpecPutBody): Promise<SpecDto> {
  return (await api.send('PUT', `/studies/${encodeURIComponent(studyId)}/analysis/spec`, body, savedSchema))
    .spec;
}

export function useSaveAnalysisSpec(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: SpecPutBody) => saveAnalysisSpec(studyId, body),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: analysisQueryKey(studyId) }),
  });
}
