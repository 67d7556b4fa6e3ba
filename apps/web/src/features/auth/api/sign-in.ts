import { useMutation, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { meSchema, type SignInBody } from '@counterpoise/contracts/auth';
import { api, setCsrfToken } from '../../../lib/api-client.js';
import { meQueryKey } from './get-me.js';

const signInResponseSchema = z.object({ me: meSchema });

export async function signIn(body: SignInBody) {
  const { me } = await api.send('POST', '/auth/sign-in', body, signInResponseSchema);
  setCsrfToken(me.csrfToken);
  return me;
}

export function useSignIn() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: signIn,
    onSuccess: (me) => {
      // A new session: nothing cached under the previous one may leak into it.
      queryClient.removeQueries({ predicate: (q) => q.queryKey[0] !== meQueryKey[0] });
      queryClient.setQueryData(meQueryKey, me);
    },
  });
}
