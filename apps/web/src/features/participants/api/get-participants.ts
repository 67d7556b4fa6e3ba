import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import type { z } from 'zod';
import { participantListSchema, type participantListQuerySchema } from '@counterpoise/contracts/participants';
import { api, toQueryString } from '../../../lib/api-client.js';

export type ParticipantListParams = z.output<typeof participantListQuerySchema>;
export type ParticipantList = z.output<typeof participantListSchema>;

export const participantsQueryKey = (studyId: string) => ['studies', studyId, 'participants'] as const;

export async function getParticipants(
  studyId: string,
  params: ParticipantListParams,
  signal?: AbortSignal,
): Promise<ParticipantList> {
  const search = toQueryString({
    sort: params.sort,
    siteId: params.siteId,
    status: params.status,
    q: params.q,
    page: params.page,
    pageSize: params.pageSize,
  });
  return api.get(
    `/studies/${encodeURIComponent(studyId)}/participants${search}`,
    participantListSchema,
    signal,
  );
}

export const participantsQueryOptions = (studyId: string, params: ParticipantListParams) =>
  queryOptions({
    queryKey: [...participantsQueryKey(studyId), 'list', params] as const,
    queryFn: ({ signal }) => getParticipants(studyId, params, signal),
    // Keep the current page on screen while the next sort or page loads.
    placeholderData: keepPreviousData,
  });

export function useParticipants(studyId: string, params: ParticipantListParams) {
  return useQuery(participantsQueryOptions(studyId, params));
}
