import { queryOptions, useQuery } from '@tanstack/react-query';
import {
  balanceArmsViewSchema,
  balancePooledViewSchema,
  type BalanceArmsView,
  type BalancePooledView,
  type Freshness,
} from '@counterpoise/contracts/balance';
import { api, toQueryString } from '../../../lib/api-client.js';

export const balanceQueryKey = (studyId: string) => ['studies', studyId, 'balance'] as const;

/*
 * While a recompute is queued or running, ask often so the new snapshot shows up within
 * seconds; otherwise a slow poll still catches recomputes started by other people's edits.
 */
export const PENDING_POLL_MS = 3_000;
export const IDLE_POLL_MS = 15_000;

export function pollInterval(freshness: Freshness | undefined): number {
  return freshness?.recomputePending ? PENDING_POLL_MS : IDLE_POLL_MS;
}

export async function getBalanceArms(
  studyId: string,
  siteId: string | null,
  signal?: AbortSignal,
): Promise<BalanceArmsView> {
  const search = toQueryString({ view: 'arms', site: siteId });
  return api.get(`/studies/${encodeURIComponent(studyId)}/balance${search}`, balanceArmsViewSchema, signal);
}

export async function getBalancePooled(studyId: string, signal?: AbortSignal): Promise<BalancePooledView> {
  return api.get(
    `/studies/${encodeURIComponent(studyId)}/balance?view=pooled`,
    balancePooledViewSchema,
    signal,
  );
}

/** Arm-level snapshot (unblinded roles only; the server refuses everyone else). */
export const balanceArmsQueryOptions = (studyId: string, siteId: string | null = null) =>
  queryOptions({
    queryKey: [...balanceQueryKey(studyId), { view: 'arms', site: siteId }] as const,
    queryFn: ({ signal }) => getBalanceArms(studyId, siteId, signal),
    refetchInterval: (query) => pollInterval(query.state.data?.freshness),
    staleTime: 0,
  });

/** Pooled, blinded figures: enrollment, completeness, pooled distributions. */
export const balancePooledQueryOptions = (studyId: string) =>
  queryOptions({
    queryKey: [...balanceQueryKey(studyId), { view: 'pooled' }] as const,
    queryFn: ({ signal }) => getBalancePooled(studyId, signal),
    refetchInterval: (query) => pollInterval(query.state.data?.freshness),
    staleTime: 0,
  });

export function useBalanceArms(studyId: string, siteId: string | null = null) {
  return useQuery(balanceArmsQueryOptions(studyId, siteId));
}

export function useBalancePooled(studyId: string, options: { enabled?: boolean } = {}) {
  return useQuery({ ...balancePooledQueryOptions(studyId), enabled: options.enabled ?? true });
}
