import { queryOptions, useQuery } from '@tanstack/react-query';
import { adminUserListSchema, type AdminUser } from '@counterpoise/contracts/admin';
import { api } from '../../../lib/api-client.js';

export const usersQueryKey = ['admin', 'users'] as const;

export async function getUsers(signal?: AbortSignal): Promise<AdminUser[]> {
  const { users } = await api.get('/admin/users', adminUserListSchema, signal);
  return users;
}

export const usersQueryOptions = () =>
  queryOptions({ queryKey: usersQueryKey, queryFn: ({ signal }) => getUsers(signal) });

export function useUsers() {
  return useQuery(usersQueryOptions());
}
