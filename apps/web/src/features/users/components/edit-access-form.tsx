import { useEffect, useRef, useState } from 'react';
import { FormProvider, useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { membershipUpdateSchema } from '@counterpoise/contracts/auth';
import { reasonSchema } from '@counterpoise/contracts/common';
import type { AdminUser } from '@counterpoise/contracts/admin';
import { Button } from '../../../components/ui/button.js';
import { Card, CardBody } from '../../../components/ui/card.js';
import { CheckboxField, SelectField, TextareaField } from '../../../components/ui/field.js';
import { FormAlert } from '../../../components/ui/form-alert.js';
import { applyServerFieldErrors, errorMessage } from '../../../lib/form-errors.js';
import { useUpdateUser } from '../api/update-user.js';
import { MembershipsEditor, type StudyOption } from './memberships-editor.js';

type EditAccessFormProps = {
  user: AdminUser;
  studies: StudyOption[];
  onDone: (message: string) => void;
  onCancel: () => void;
};

// Same body as the API takes, with the friendlier reason message from the shared schema.
const editAccessSchema = membershipUpdateSchema.extend({ reason: reasonSchema });

/** Changes to roles are audited edits, so a reason is required (DOMAIN.md, audit trail). */
export function EditAccessForm({ user, studies, onDone, onCancel }: EditAccessFormProps) {
  const update = useUpdateUser();
  const headingRef = useRef<HTMLHeadingElement>(null);
  const [formError, setFormError] = useState<string | null>(null);
  const [formExtra, setFormExtra] = useState<string[]>([]);
  const form = useForm({
    resolver: zodResolver(editAccessSchema),
    defaultValues: {
      isAdmin: user.isAdmin,
      status: user.status === 'disabled' ? 'disabled' : 'active',
      memberships: user.memberships.map((m) => ({ studyId: m.studyId, role: m.role, siteIds: m.siteIds })),
      reason: '',
    },
  });
  const {
    register,
    handleSubmit,
    setError,
    formState: { errors },
  } = form;

  // Move focus to the panel so keyboard and screen-reader users land where the edit happens.
  useEffect(() => headingRef.current?.focus(), [user.id]);

  const onSubmit = handleSubmit(async (values) => {
    setFormError(null);
    setFormExtra([]);
    const currentStatus = user.status === 'disabled' ? 'disabled' : 'active';
    // An invited account stays invited until accepted; send status only when it was changed.
    const body = { ...values, status: values.status === currentStatus ? undefined : values.status };
    try {
      await update.mutateAsync({ userId: user.id, body });
      onDone(`Access for ${user.displayName} was updated.`);
    } catch (error) {
      setFormExtra(applyServerFieldErrors(error, setError, ['isAdmin', 'status', 'memberships', 'reason']));
      setFormError(errorMessage(error));
    }
  });

  return (
    <Card>
      <div className="flex flex-wrap items-start justify-between gap-3 border-b border-rule px-5 py-4">
        <div>
          <h2 ref={headingRef} tabIndex={-1} className="text-base font-semibold text-ink">
            Edit access: {user.displayName}
          </h2>
          <p className="figure mt-0.5 text-sm text-graphite">{user.email}</p>
        </div>
      </div>
      <CardBody>
        <FormProvider {...form}>
          <form
            onSubmit={onSubmit}
            noValidate
            className="flex flex-col gap-5"
            aria-label={`Edit access for ${user.displayName}`}
          >
            <FormAlert message={formError} extra={formExtra} />
            <div className="grid gap-4 sm:grid-cols-2">
              <SelectField
                label="Account"
                hint={
                  user.status === 'invited'
                    ? 'Invited: the account becomes active when the invitation is accepted.'
                    : undefined
                }
                error={errors.status?.message}
                {...register('status')}
              >
                <option value="active">
                  {user.status === 'invited' ? 'Invited (leave as is)' : 'Active'}
                </option>
                <option value="disabled">Disabled: cannot sign in</option>
              </SelectField>
              <div className="sm:pt-7">
                <CheckboxField label="Administrator" {...register('isAdmin')} />
              </div>
            </div>
            <MembershipsEditor studies={studies} />
            <TextareaField
              label="Reason for this change"
              required
              hint="Recorded in the audit trail with the old and new access."
              error={errors.reason?.message}
              {...register('reason')}
            />
            <div className="flex gap-2">
              <Button type="submit" busy={update.isPending}>
                Save access
              </Button>
              <Button variant="secondary" onClick={onCancel}>
                Cancel
              </Button>
            </div>
          </form>
        </FormProvider>
      </CardBody>
    </Card>
  );
}
