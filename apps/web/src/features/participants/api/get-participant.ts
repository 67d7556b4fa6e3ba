import { queryOptions, useQuery } from '@tanstack/react-query';
import { z } from 'zod';
import { participantDetailSchema, type ParticipantDetail } from '@counterpoise/contracts/participants';
import { api } from '../../../lib/api-client.js';
import { participantsQueryKey } from './get-participants.js';

export const participantResponseSchema = z.object({ participant: participantDetailSchema });

export const participantQueryKey = (studyId: string, participantId: string) =>
  [...participantsQueryKey(studyId), 'detail', participantId] as const;

export async function getParticipant(
  studyId: string,
  participantId: string,
  signal?: AbortSignal,
): Promise<ParticipantDetail> {
  const { participant } = await api.get(
    `/studies/${encodeURIComponent(studyId)}/participants/${encodeURIComponent(participantId)}`,
    participantResponseSchema,
    signal,
  );
  return participant;
}

export const participantQueryOptions = (studyId: string, participantId: string) =>
  queryOptions({
    queryKey: participantQueryKey(studyId, participantId),
    queryFn: ({ signal }) => getParticipant(studyId, participantId, signal),
  });

export function useParticipant(studyId: string, participantId: string) {
  return useQuery(participantQueryOptions(studyId, participantId));
}
