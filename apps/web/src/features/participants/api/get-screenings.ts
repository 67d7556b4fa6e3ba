import { queryOptions, useQuery } from '@tanstack/react-query';
import { screeningListSchema, type ScreeningDto } from '@counterpoise/contracts/participants';
import { api, toQueryString } from '../../../lib/api-client.js';

export type ScreeningLogParams = {
  siteId?: string;
  eligible?: 'true' | 'false';
  page: number;
  pageSize: number;
};

export const screeningsQueryKey = (studyId: string) => ['studies', studyId, 'screenings'] as const;

export async function getScreenings(
  studyId: string,
  params: ScreeningLogParams,
  signal?: AbortSignal,
): Promise<{ items: ScreeningDto[]; total: number }> {
  return api.get(
    `/studies/${encodeURIComponent(studyId)}/screenings${toQueryString(params)}`,
    screeningListSchema,
    signal,
  );
}

export const screeningsQueryOptions = (studyId: string, params: ScreeningLogParams) =>
  queryOptions({
    queryKey: [...screeningsQueryKey(studyId), params] as const,
    queryFn: ({ signal }) => getScreenings(studyId, params, signal),
  });

export function useScreenings(studyId: string, params: ScreeningLogParams) {
  return useQuery(screeningsQueryOptions(studyId, params));
}
