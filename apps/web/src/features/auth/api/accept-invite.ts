import { useMutation } from '@tanstack/react-query';
import type { z } from 'zod';
import type { inviteAcceptSchema } from '@counterpoise/contracts/auth';
import { api } from '../../../lib/api-client.js';

export type InviteAccept = z.output<typeof inviteAcceptSchema>;

export async function acceptInvite(body: InviteAccept): Promise<void> {
  await api.sendNoContent('POST', '/auth/invite/accept', body);
}

export function useAcceptInvite() {
  return useMutation({ mutationFn: acceptInvite });
}
