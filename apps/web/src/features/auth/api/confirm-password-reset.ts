import { useMutation } from '@tanstack/react-query';
import type { z } from 'zod';
import type { passwordResetConfirmSchema } from '@counterpoise/contracts/auth';
import { api } from '../../../lib/api-client.js';

export type PasswordResetConfirm = z.output<typeof passwordResetConfirmSchema>;

export async function confirmPasswordReset(body: PasswordResetConfirm): Promise<void> {
  await api.sendNoContent('POST', '/auth/password-reset/confirm', body);
}

export function useConfirmPasswordReset() {
  return useMutation({ mutationFn: confirmPasswordReset });
}
