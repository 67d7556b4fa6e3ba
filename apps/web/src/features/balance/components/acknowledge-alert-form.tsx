import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { alertPatchBodySchema, type Alert } from '@counterpoise/contracts/balance';
import { Button } from '../../../components/ui/button.js';
import { TextareaField } from '../../../components/ui/field.js';
import { FormAlert } from '../../../components/ui/form-alert.js';
import { applyServerFieldErrors, errorMessage } from '../../../lib/form-errors.js';
import { useAcknowledgeAlert } from '../api/acknowledge-alert.js';

/** Acknowledging records who read the alert and what they concluded; it does not change the analysis. */
export function AcknowledgeAlertForm({
  studyId,
  alert,
  onDone,
}: {
  studyId: string;
  alert: Alert;
  onDone?: () => void;
}) {
  const acknowledge = useAcknowledgeAlert(studyId);
  const [formError, setFormError] = useState<string | null>(null);
  const [formExtra, setFormExtra] = useState<string[]>([]);
  const {
    register,
    handleSubmit,
    setError,
    formState: { errors },
  } = useForm({
    resolver: zodResolver(alertPatchBodySchema),
    defaultValues: { state: 'acknowledged' as const, comment: '' },
  });

  const onSubmit = handleSubmit(async (values) => {
    setFormError(null);
    setFormExtra([]);
    try {
      await acknowledge.mutateAsync({ alertId: alert.id, body: values });
      onDone?.();
    } catch (error) {
      setFormExtra(applyServerFieldErrors(error, setError, ['comment', 'state']));
      setFormError(errorMessage(error));
    }
  });

  return (
    <form
      onSubmit={onSubmit}
      noValidate
      className="flex flex-col gap-3"
      aria-label={`Acknowledge the alert on ${alert.covariateLabel}`}
    >
      <FormAlert message={formError} extra={formExtra} />
      <input type="hidden" {...register('state')} />
      <TextareaField
        label="Comment"
        hint="What you checked and concluded, for the audit trail (for example: within what chance gives at this site's size; no change to the pre-specified analysis)."
        required
        error={errors.comment?.message}
        {...register('comment')}
      />
      <div>
        <Button type="submit" busy={acknowledge.isPending}>
          Acknowledge
        </Button>
      </div>
    </form>
  );
}
