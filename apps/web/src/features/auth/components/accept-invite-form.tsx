import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import { paths } from '../../../config/paths.js';
import { Button } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { TextField } from '../../../components/ui/field.js';
import { FormAlert } from '../../../components/ui/form-alert.js';
import { TextLink } from '../../../components/ui/text-link.js';
import { isApiError } from '../../../lib/api-client.js';
import { applyServerFieldErrors, errorMessage } from '../../../lib/form-errors.js';
import { useAcceptInvite } from '../api/accept-invite.js';
import { newPasswordPairSchema } from './new-password-fields.js';

const acceptFormSchema = z
  .object({ displayName: z.string().trim().min(1, 'Enter the name colleagues know you by').max(120) })
  .and(newPasswordPairSchema);

export function AcceptInviteForm({ token }: { token: string }) {
  const accept = useAcceptInvite();
  const [formError, setFormError] = useState<string | null>(null);
  const [tokenRejected, setTokenRejected] = useState(false);
  const [done, setDone] = useState(false);
  const {
    register,
    handleSubmit,
    setError,
    formState: { errors },
  } = useForm({
    resolver: zodResolver(acceptFormSchema),
    defaultValues: { displayName: '', password: '', confirmPassword: '' },
  });

  const onSubmit = handleSubmit(async ({ displayName, password }) => {
    setFormError(null);
    try {
      await accept.mutateAsync({ token, displayName, password });
      setDone(true);
    } catch (error) {
      if (isApiError(error, 'token_invalid')) {
        setTokenRejected(true);
        return;
      }
      applyServerFieldErrors(error, setError, ['displayName', 'password']);
      setFormError(errorMessage(error));
    }
  });

  if (done) {
    return (
      <div aria-live="polite">
        <Callout tone="success" title="Your account is ready">
          <p>Sign in with your e-mail address and the password you just chose.</p>
        </Callout>
        <p className="mt-5">
          <TextLink to={paths.auth.signIn.href()}>Go to sign in</TextLink>
        </p>
      </div>
    );
  }

  if (tokenRejected) {
    return (
      <div role="alert">
        <Callout tone="danger" title="This invitation no longer works">
          <p>Invitations work once and expire. Ask the administrator who invited you to send a new one.</p>
        </Callout>
      </div>
    );
  }

  return (
    <form onSubmit={onSubmit} noValidate className="flex flex-col gap-5">
      <FormAlert message={formError} />
      <TextField
        label="Your name"
        autoComplete="name"
        required
        hint="Shown in the audit trail next to what you record."
        error={errors.displayName?.message}
        {...register('displayName')}
      />
      <TextField
        label="Choose a password"
        type="password"
        autoComplete="new-password"
        required
        hint="At least 12 characters."
        error={errors.password?.message}
        {...register('password')}
      />
      <TextField
        label="Repeat the password"
        type="password"
        autoComplete="new-password"
        required
        error={errors.confirmPassword?.message}
        {...register('confirmPassword')}
      />
      <Button type="submit" busy={accept.isPending} className="w-full">
        Create my account
      </Button>
    </form>
  );
}
