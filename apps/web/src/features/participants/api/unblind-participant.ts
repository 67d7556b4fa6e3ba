import { useMutation, useQueryClient } from '@tanstack/react-query';
import { unblindResponseSchema } from '@counterpoise/contracts/participants';
import type { z } from 'zod';
import { api } from '../../../lib/api-client.js';
import { participantQueryKey } from './get-participant.js';

export type UnblindResult = z.output<typeof unblindResponseSchema>;

/** Emergency unblinding of one participant: audited, and the study's unblinded staff are e-mailed. */
export async function unblindParticipant({
  studyId,
  participantId,
  reason,
}: {
  studyId: string;
  participantId: string;
  reason: string;
}): Promise<UnblindResult> {
  return api.send(
    'POST',
    `/studies/${encodeURIComponent(studyId)}/participants/${encodeURIComponent(participantId)}/unblind`,
    { reason },
    unblindResponseSchema,
  );
}

export function useUnblindParticipant(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: unblindParticipant,
    // The history now holds the unblinding entry.
    onSuccess: (result) =>
      queryClient.invalidateQueries({ queryKey: participantQueryKey(studyId, result.participantId) }),
  });
}
