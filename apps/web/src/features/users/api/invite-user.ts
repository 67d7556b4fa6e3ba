import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { InviteBody } from '@counterpoise/contracts/auth';
import { api } from '../../../lib/api-client.js';
import { usersQueryOptions } from './get-users.js';

export async function inviteUser(body: InviteBody): Promise<void> {
  await api.sendNoContent('POST', '/admin/users/invite', body);
}

export function useInviteUser() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: inviteUser,
    onSuccess: () => queryClient.invalidateQueries({ queryKey: usersQueryOptions().queryKey }),
  });
}
