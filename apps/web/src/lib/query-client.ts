import { MutationCache, QueryCache, QueryClient } from '@tanstack/react-query';
import { isApiError, setCsrfToken } from './api-client.js';

/** Client errors (4xx) are answers, not glitches: retrying them only delays the message. */
function shouldRetry(failureCount: number, error: unknown): boolean {
  if (isApiError(error) && error.status >= 400 && error.status < 500) return false;
  return failureCount < 2;
}

/*
 * A 401 on any call means the session ended (expired, signed out elsewhere, or revoked by a
 * role change). Clearing the cached user sends the app shell back to the sign-in page.
 */
function onSessionLost(error: unknown): void {
  if (!isApiError(error, 'unauthenticated')) return;
  setCsrfToken(null);
  queryClient.setQueryData(['me'], null);
}

export const queryClient: QueryClient = new QueryClient({
  queryCache: new QueryCache({ onError: onSessionLost }),
  mutationCache: new MutationCache({ onError: onSessionLost }),
  defaultOptions: {
    queries: { retry: shouldRetry, staleTime: 30_000, refetchOnWindowFocus: false },
    mutations: { retry: false },
  },
});
