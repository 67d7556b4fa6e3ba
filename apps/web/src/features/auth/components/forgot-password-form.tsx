import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { passwordResetRequestSchema } from '@counterpoise/contracts/auth';
import { Button } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { TextField } from '../../../components/ui/field.js';
import { FormAlert } from '../../../components/ui/form-alert.js';
import { applyServerFieldErrors, errorMessage } from '../../../lib/form-errors.js';
import { useRequestPasswordReset } from '../api/request-password-reset.js';

export function ForgotPasswordForm() {
  const request = useRequestPasswordReset();
  const [formError, setFormError] = useState<string | null>(null);
  const [sentTo, setSentTo] = useState<string | null>(null);
  const {
    register,
    handleSubmit,
    setError,
    formState: { errors },
  } = useForm({ resolver: zodResolver(passwordResetRequestSchema), defaultValues: { email: '' } });

  const onSubmit = handleSubmit(async (values) => {
    setFormError(null);
    try {
      await request.mutateAsync(values);
      setSentTo(values.email);
    } catch (error) {
      applyServerFieldErrors(error, setError, ['email']);
      setFormError(errorMessage(error));
    }
  });

  return (
    <div className="flex flex-col gap-5">
      <div aria-live="polite">
        {sentTo && (
          <Callout tone="success" title="Check your inbox">
            <p>
              If an account exists for <span className="font-semibold">{sentTo}</span>, a link to choose a new
              password is on its way. The link works once and expires.
            </p>
            <p className="mt-1">
              On a local installation the message lands in the administrator's Outbox page.
            </p>
          </Callout>
        )}
      </div>
      <form onSubmit={onSubmit} noValidate className="flex flex-col gap-5">
        <FormAlert message={formError} />
        <TextField
          label="E-mail"
          type="email"
          autoComplete="email"
          required
          error={errors.email?.message}
          {...register('email')}
        />
        <Button type="submit" busy={request.isPending} className="w-full">
          {sentTo ? 'Send another link' : 'Send reset link'}
        </Button>
      </form>
    </div>
  );
}
