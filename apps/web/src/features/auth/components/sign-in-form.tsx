import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { signInBodySchema, type Me } from '@counterpoise/contracts/auth';
import { Button } from '../../../components/ui/button.js';
import { TextField } from '../../../components/ui/field.js';
import { FormAlert } from '../../../components/ui/form-alert.js';
import { isApiError } from '../../../lib/api-client.js';
import { applyServerFieldErrors, errorMessage } from '../../../lib/form-errors.js';
import { useSignIn } from '../api/sign-in.js';

export function SignInForm({ onSignedIn }: { onSignedIn: (me: Me) => void }) {
  const signIn = useSignIn();
  const [formError, setFormError] = useState<string | null>(null);
  const {
    register,
    handleSubmit,
    setError,
    formState: { errors },
  } = useForm({ resolver: zodResolver(signInBodySchema), defaultValues: { email: '', password: '' } });

  const onSubmit = handleSubmit(async (values) => {
    setFormError(null);
    try {
      onSignedIn(await signIn.mutateAsync(values));
    } catch (error) {
      applyServerFieldErrors(error, setError, ['email', 'password']);
      if (isApiError(error, 'rate_limited')) {
        setFormError('Too many sign-in attempts. Wait a few minutes, then try again.');
      } else {
        setFormError(errorMessage(error));
      }
    }
  });

  return (
    <form onSubmit={onSubmit} noValidate className="flex flex-col gap-5">
      <FormAlert message={formError} />
      <TextField
        label="E-mail"
        type="email"
        autoComplete="username"
        required
        error={errors.email?.message}
        {...register('email')}
      />
      <TextField
        label="Password"
        type="password"
        autoComplete="current-password"
        required
        error={errors.password?.message}
        {...register('password')}
      />
      <Button type="submit" busy={signIn.isPending} className="mt-1 w-full">
        Sign in
      </Button>
    </form>
  );
}
