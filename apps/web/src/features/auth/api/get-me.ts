import { queryOptions, useQuery } from '@tanstack/react-query';
import { meSchema, type Me } from '@counterpoise/contracts/auth';
import { api, isApiError, setCsrfToken } from '../../../lib/api-client.js';

export const meQueryKey = ['me'] as const;

/** The signed-in user, or null when there is no session (401 is an answer here, not an error). */
export async function getMe(signal?: AbortSignal): Promise<Me | null> {
  try {
    const me = await api.get('/me', meSchema, signal);
    setCsrfToken(me.csrfToken);
    return me;
  } catch (error) {
    if (isApiError(error, 'unauthenticated')) {
      setCsrfToken(null);
      return null;
    }
    throw error;
  }
}

export const meQueryOptions = () =>
  queryOptions({ queryKey: meQueryKey, queryFn: ({ signal }) => getMe(signal), staleTime: 5 * 60_000 });

export function useMe() {
  return useQuery(meQueryOptions());
}
