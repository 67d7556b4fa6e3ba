import { queryOptions, useQuery } from '@tanstack/react-query';
import { alertListSchema } from '@counterpoise/contracts/balance';
import type { z } from 'zod';
import { api, toQueryString } from '../../../lib/api-client.js';
import { IDLE_POLL_MS } from './get-balance.js';

export type AlertList = z.output<typeof alertListSchema>;
export type AlertStateFilter = 'open' | 'acknowledged' | 'cleared' | 'active' | 'all';

export const alertsQueryKey = (studyId: string) => ['studies', studyId, 'alerts'] as const;

export async function getAlerts(
  studyId: string,
  state: AlertStateFilter,
  signal?: AbortSignal,
): Promise<AlertList> {
  const search = toQueryString({ state: state === 'all' ? undefined : state });
  return api.get(`/studies/${encodeURIComponent(studyId)}/alerts${search}`, alertListSchema, signal);
}

export const alertsQueryOptions = (studyId: string, state: AlertStateFilter = 'all') =>
  queryOptions({
    queryKey: [...alertsQueryKey(studyId), { state }] as const,
    queryFn: ({ signal }) => getAlerts(studyId, state, signal),
    // New alerts open from background recomputes; a slow poll picks them up.
    refetchInterval: IDLE_POLL_MS,
  });

export function useAlerts(studyId: string, state: AlertStateFilter = 'all') {
  return useQuery(alertsQueryOptions(studyId, state));
}
