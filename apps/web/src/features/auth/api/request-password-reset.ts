import { useMutation } from '@tanstack/react-query';
import type { z } from 'zod';
import type { passwordResetRequestSchema } from '@counterpoise/contracts/auth';
import { api } from '../../../lib/api-client.js';

export type PasswordResetRequest = z.output<typeof passwordResetRequestSchema>;

/** Always answered 202, whether or not the address has an account (no enumeration). */
export async function requestPasswordReset(body: PasswordResetRequest): Promise<void> {
  await api.sendNoContent('POST', '/auth/password-reset/request', body);
}

export function useRequestPasswordReset() {
  return useMutation({ mutationFn: requestPasswordReset });
}
