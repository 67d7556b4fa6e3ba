import { useMutation, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import {
  screeningDtoSchema,
  type ScreeningBody,
  type ScreeningDto,
} from '@counterpoise/contracts/participants';
import { api } from '../../../lib/api-client.js';
import { participantsQueryKey } from './get-participants.js';
import { screeningsQueryKey } from './get-screenings.js';

const screeningResponseSchema = z.object({ screening: screeningDtoSchema });

/** Evaluates eligibility on the server and records the screening (a failure is recorded too). */
export async function createScreening({
  studyId,
  body,
}: {
  studyId: string;
  body: ScreeningBody;
}): Promise<ScreeningDto> {
  const { screening } = await api.send(
    'POST',
    `/studies/${encodeURIComponent(studyId)}/screenings`,
    body,
    screeningResponseSchema,
  );
  return screening;
}

export function useCreateScreening(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: createScreening,
    onSuccess: () => {
      void queryClient.invalidateQueries({ queryKey: screeningsQueryKey(studyId) });
      void queryClient.invalidateQueries({ queryKey: [...participantsQueryKey(studyId), 'list'] });
    },
  });
}
