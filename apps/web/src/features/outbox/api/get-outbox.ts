import { queryOptions, useQuery } from '@tanstack/react-query';
import { outboxListSchema, type OutboxMessage } from '@counterpoise/contracts/admin';
import { api } from '../../../lib/api-client.js';

export const outboxQueryKey = ['admin', 'outbox'] as const;

export async function getOutbox(signal?: AbortSignal): Promise<OutboxMessage[]> {
  const { messages } = await api.get('/admin/outbox', outboxListSchema, signal);
  return [...messages].sort((a, b) => b.receivedAt.localeCompare(a.receivedAt));
}

export const outboxQueryOptions = () =>
  queryOptions({ queryKey: outboxQueryKey, queryFn: ({ signal }) => getOutbox(signal), staleTime: 0 });

export function useOutbox() {
  return useQuery(outboxQueryOptions());
}
