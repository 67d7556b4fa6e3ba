import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { ParticipantDetail, ParticipantPatchBody } from '@counterpoise/contracts/participants';
import { api } from '../../../lib/api-client.js';
import { participantResponseSchema, participantQueryKey } from './get-participant.js';
import { participantsQueryKey } from './get-participants.js';

/** Corrections (with a reason, audited with old and new values) and withdrawal. */
export async function updateParticipant({
  studyId,
  participantId,
  body,
}: {
  studyId: string;
  participantId: string;
  body: ParticipantPatchBody;
}): Promise<ParticipantDetail> {
  const { participant } = await api.send(
    'PATCH',
    `/studies/${encodeURIComponent(studyId)}/participants/${encodeURIComponent(participantId)}`,
    body,
    participantResponseSchema,
  );
  return participant;
}

export function useUpdateParticipant(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: updateParticipant,
    onSuccess: (participant) => {
      queryClient.setQueryData(participantQueryKey(studyId, participant.id), participant);
      void queryClient.invalidateQueries({ queryKey: [...participantsQueryKey(studyId), 'list'] });
    },
  });
}
