import { useMutation, useQueryClient } from '@tanstack/react-query';
import {
  enrollResponseSchema,
  type EnrollBody,
  type EnrollResponse,
} from '@counterpoise/contracts/participants';
import { api } from '../../../lib/api-client.js';
import { participantsQueryKey } from './get-participants.js';
import { screeningsQueryKey } from './get-screenings.js';

/** Irrevocable registration; the allocation is computed and committed in the same transaction. */
export async function enrollParticipant({
  studyId,
  body,
}: {
  studyId: string;
  body: EnrollBody;
}): Promise<EnrollResponse> {
  return api.send('POST', `/studies/${encodeURIComponent(studyId)}/participants`, body, enrollResponseSchema);
}

export function useEnrollParticipant(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: enrollParticipant,
    onSuccess: () => {
      void queryClient.invalidateQueries({ queryKey: participantsQueryKey(studyId) });
      void queryClient.invalidateQueries({ queryKey: screeningsQueryKey(studyId) });
      void queryClient.invalidateQueries({ queryKey: ['studies', studyId, 'detail'] });
      void queryClient.invalidateQueries({ queryKey: ['studies'], exact: true });
    },
  });
}
