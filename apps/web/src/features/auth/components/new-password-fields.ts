import { z } from 'zod';
import { newPasswordSchema } from '@counterpoise/contracts/auth';

/** New password typed twice; the second copy is checked here and never sent. */
export const newPasswordPairSchema = z
  .object({ password: newPasswordSchema, confirmPassword: z.string() })
  .refine((v) => v.password === v.confirmPassword, {
    path: ['confirmPassword'],
    message: 'The two passwords differ',
  });

/** Invite and reset links carry the token in `?token=`; anything shorter than 20 is not one of ours. */
export function tokenLooksUsable(token: string | null): token is string {
  return token !== null && token.length >= 20 && token.length <= 200;
}
