import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import { auditPageSchema } from '@counterpoise/contracts/audit';
import { api, toQueryString } from '../../../lib/api-client.js';

/** Filters as the API takes them (`from`/`to` are ISO date-times in UTC). */
export type AuditFilters = {
  studyId?: string | undefined;
  action?: string | undefined;
  entityType?: string | undefined;
  entityId?: string | undefined;
  actor?: string | undefined;
  from?: string | undefined;
  to?: string | undefined;
  limit: number;
};

export type AuditPageRequest = AuditFilters & { beforeSeq?: number | undefined };

export function auditSearch(request: AuditPageRequest): string {
  return toQueryString({ ...request });
}

export async function getAuditEvents(request: AuditPageRequest, signal?: AbortSignal) {
  return api.get(`/audit${auditSearch(request)}`, auditPageSchema, signal);
}

export const auditEventsQueryOptions = (request: AuditPageRequest) =>
  queryOptions({
    queryKey: ['audit', 'events', request] as const,
    queryFn: ({ signal }) => getAuditEvents(request, signal),
    // Keep the current page visible while the next one loads.
    placeholderData: keepPreviousData,
  });

export function useAuditEvents(request: AuditPageRequest) {
  return useQuery(auditEventsQueryOptions(request));
}
