import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { paths } from '../../../config/paths.js';
import { Button } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { TextField } from '../../../components/ui/field.js';
import { FormAlert } from '../../../components/ui/form-alert.js';
import { TextLink } from '../../../components/ui/text-link.js';
import { isApiError } from '../../../lib/api-client.js';
import { applyServerFieldErrors, errorMessage } from '../../../lib/form-errors.js';
import { useConfirmPasswordReset } from '../api/confirm-password-reset.js';
import { newPasswordPairSchema } from './new-password-fields.js';

export function ResetPasswordForm({ token }: { token: string }) {
  const confirm = useConfirmPasswordReset();
  const [formError, setFormError] = useState<string | null>(null);
  const [tokenRejected, setTokenRejected] = useState(false);
  const [done, setDone] = useState(false);
  const {
    register,
    handleSubmit,
    setError,
    formState: { errors },
  } = useForm({
    resolver: zodResolver(newPasswordPairSchema),
    defaultValues: { password: '', confirmPassword: '' },
  });

  const onSubmit = handleSubmit(async ({ password }) => {
    setFormError(null);
    try {
      await confirm.mutateAsync({ token, password });
      setDone(true);
    } catch (error) {
      if (isApiError(error, 'token_invalid')) {
        setTokenRejected(true);
        return;
      }
      applyServerFieldErrors(error, setError, ['password']);
      setFormError(errorMessage(error));
    }
  });

  if (done) {
    return (
      <div aria-live="polite">
        <Callout tone="success" title="Password changed">
          <p>Your new password is set. Sessions signed in with the old one have ended.</p>
        </Callout>
        <p className="mt-5">
          <TextLink to={paths.auth.signIn.href()}>Sign in with your new password</TextLink>
        </p>
      </div>
    );
  }

  if (tokenRejected) {
    return (
      <div role="alert">
        <Callout tone="danger" title="This link no longer works">
          <p>Reset links work once and expire after a short time. Ask for a new one.</p>
        </Callout>
        <p className="mt-5">
          <TextLink to={paths.auth.forgotPassword.href()}>Send a new reset link</TextLink>
        </p>
      </div>
    );
  }

  return (
    <form onSubmit={onSubmit} noValidate className="flex flex-col gap-5">
      <FormAlert message={formError} />
      <TextField
        label="New password"
        type="password"
        autoComplete="new-password"
        required
        hint="At least 12 characters. A short sentence is easier to remember than symbols."
        error={errors.password?.message}
        {...register('password')}
      />
      <TextField
        label="Repeat the new password"
        type="password"
        autoComplete="new-password"
        required
        error={errors.confirmPassword?.message}
        {...register('confirmPassword')}
      />
      <Button type="submit" busy={confirm.isPending} className="w-full">
        Set new password
      </Button>
    </form>
  );
}
