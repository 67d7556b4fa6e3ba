import { queryOptions, useQuery } from '@tanstack/react-query';
import { balanceHistorySchema, type BalanceHistory } from '@counterpoise/contracts/balance';
import { api, toQueryString } from '../../../lib/api-client.js';
import { balanceQueryKey } from './get-balance.js';

export async function getBalanceHistory(
  studyId: string,
  siteId: string | null,
  signal?: AbortSignal,
): Promise<BalanceHistory> {
  const search = toQueryString({ site: siteId });
  return api.get(
    `/studies/${encodeURIComponent(studyId)}/balance/history${search}`,
    balanceHistorySchema,
    signal,
  );
}

// Under the balance key, so a recompute's invalidation refreshes the history too.
export const balanceHistoryQueryOptions = (studyId: string, siteId: string | null = null) =>
  queryOptions({
    queryKey: [...balanceQueryKey(studyId), 'history', { site: siteId }] as const,
    queryFn: ({ signal }) => getBalanceHistory(studyId, siteId, signal),
  });

export function useBalanceHistory(studyId: string, siteId: string | null = null) {
  return useQuery(balanceHistoryQueryOptions(studyId, siteId));
}
