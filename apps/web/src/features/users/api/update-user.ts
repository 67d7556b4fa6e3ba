import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { z } from 'zod';
import type { membershipUpdateSchema } from '@counterpoise/contracts/auth';
import { api } from '../../../lib/api-client.js';
import { usersQueryOptions } from './get-users.js';

export type UserAccessUpdate = z.output<typeof membershipUpdateSchema>;

export async function updateUser({
  userId,
  body,
}: {
  userId: string;
  body: UserAccessUpdate;
}): Promise<void> {
  await api.sendNoContent('PATCH', `/admin/users/${encodeURIComponent(userId)}`, body);
}

export function useUpdateUser() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: updateUser,
    onSuccess: () => queryClient.invalidateQueries({ queryKey: usersQueryOptions().queryKey }),
  });
}
