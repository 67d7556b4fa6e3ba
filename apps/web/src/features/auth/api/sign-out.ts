import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api, setCsrfToken } from '../../../lib/api-client.js';
import { meQueryKey } from './get-me.js';

export async function signOut(): Promise<void> {
  await api.sendNoContent('POST', '/auth/sign-out');
}

export function useSignOut() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: signOut,
    // Forget the session locally even if the server call failed: the user asked to leave.
    onSettled: () => {
      setCsrfToken(null);
      queryClient.clear();
      queryClient.setQueryData(meQueryKey, null);
    },
  });
}
