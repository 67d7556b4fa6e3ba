import { useState } from 'react';
import { FormProvider, useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { inviteBodySchema } from '@counterpoise/contracts/auth';
import { Button } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { CheckboxField, TextField } from '../../../components/ui/field.js';
import { FormAlert } from '../../../components/ui/form-alert.js';
import { applyServerFieldErrors, errorMessage } from '../../../lib/form-errors.js';
import { useInviteUser } from '../api/invite-user.js';
import { MembershipsEditor, type StudyOption } from './memberships-editor.js';

export function InviteUserForm({ studies }: { studies: StudyOption[] }) {
  const invite = useInviteUser();
  const [formError, setFormError] = useState<string | null>(null);
  const [formExtra, setFormExtra] = useState<string[]>([]);
  const [invited, setInvited] = useState<string | null>(null);
  const form = useForm({
    resolver: zodResolver(inviteBodySchema),
    defaultValues: { email: '', displayName: '', isAdmin: false, memberships: [] },
  });
  const {
    register,
    handleSubmit,
    setError,
    reset,
    formState: { errors },
  } = form;

  const onSubmit = handleSubmit(async (values) => {
    setFormError(null);
    setFormExtra([]);
    setInvited(null);
    try {
      await invite.mutateAsync(values);
      setInvited(values.email);
      reset();
    } catch (error) {
      setFormExtra(
        applyServerFieldErrors(error, setError, ['email', 'displayName', 'isAdmin', 'memberships']),
      );
      setFormError(errorMessage(error));
    }
  });

  return (
    <FormProvider {...form}>
      <form onSubmit={onSubmit} noValidate className="flex flex-col gap-5" aria-label="Invite a user">
        <div>
          <div aria-live="polite">
            {invited && (
              <Callout tone="success" title="Invitation sent" className="mb-3">
                An invitation went to <span className="font-semibold">{invited}</span>. On a local
                installation you can open it on the Outbox page.
              </Callout>
            )}
          </div>
          <FormAlert message={formError} extra={formExtra} />
        </div>
        <div className="grid gap-4 sm:grid-cols-2">
          <TextField
            label="E-mail"
            type="email"
            autoComplete="off"
            required
            error={errors.email?.message}
            {...register('email')}
          />
          <TextField
            label="Name"
            autoComplete="off"
            required
            error={errors.displayName?.message}
            {...register('displayName')}
          />
        </div>
        <CheckboxField
          label="Administrator"
          hint="Manages accounts, roles and site assignments. Sees no arm-level data by this role alone."
          {...register('isAdmin')}
        />
        <MembershipsEditor studies={studies} />
        <div>
          <Button type="submit" busy={invite.isPending}>
            Send invitation
          </Button>
        </div>
      </form>
    </FormProvider>
  );
}
