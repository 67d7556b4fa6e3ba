import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { unblindBodySchema } from '@counterpoise/contracts/participants';
import { Button } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { Dialog } from '../../../components/ui/dialog.js';
import { CheckboxField, TextareaField } from '../../../components/ui/field.js';
import { FormAlert } from '../../../components/ui/form-alert.js';
import { applyServerFieldErrors, errorMessage } from '../../../lib/form-errors.js';
import { useUnblindParticipant, type UnblindResult } from '../api/unblind-participant.js';
import { utcStamp } from './participant-labels.js';

type UnblindProps = { studyId: string; participantId: string; participantCode: string };

/**
 * Emergency unblinding of one participant. It cannot be undone: the reason is audited and
 * the study's unblinded staff are e-mailed, so the dialog asks twice.
 */
export function EmergencyUnblind({ studyId, participantId, participantCode }: UnblindProps) {
  const [open, setOpen] = useState(false);
  const [result, setResult] = useState<UnblindResult | null>(null);
  const [formError, setFormError] = useState<string | null>(null);
  const [confirmed, setConfirmed] = useState(false);
  const unblind = useUnblindParticipant(studyId);
  const {
    register,
    handleSubmit,
    setError,
    reset,
    formState: { errors },
  } = useForm({ resolver: zodResolver(unblindBodySchema), defaultValues: { reason: '' } });

  const close = () => {
    setOpen(false);
    setConfirmed(false);
    setFormError(null);
    reset();
  };

  const onSubmit = handleSubmit(async ({ reason }) => {
    setFormError(null);
    try {
      setResult(await unblind.mutateAsync({ studyId, participantId, reason }));
      close();
    } catch (error) {
      applyServerFieldErrors(error, setError, ['reason']);
      setFormError(errorMessage(error));
    }
  });

  return (
    <div className="flex flex-col gap-3">
      <div aria-live="polite">
        {result && (
          <Callout tone="caution" role="status" title={`Unblinded: ${result.arm.name}`}>
            <p>
              Arm <span className="figure">{result.arm.code}</span>, recorded at{' '}
              <span className="figure">{utcStamp(result.unblindedAt)}</span>.{' '}
              {result.notified > 0
                ? `${result.notified} unblinded staff member${result.notified === 1 ? ' was' : 's were'} notified by e-mail.`
                : 'No one could be notified by e-mail.'}
            </p>
          </Callout>
        )}
      </div>
      {!result && (
        <div>
          <Button variant="danger" size="sm" onClick={() => setOpen(true)}>
            Emergency unblinding…
          </Button>
        </div>
      )}
      <Dialog open={open} onClose={close} title={`Emergency unblinding of ${participantCode}`}>
        <form onSubmit={onSubmit} noValidate className="flex flex-col gap-4">
          <Callout tone="danger" title="This cannot be undone">
            The arm of this participant will be shown to you, the unblinding is recorded in the audit trail
            with your name, the time and your reason, and the study’s unblinded staff are e-mailed. Unblind
            only when the participant’s care needs it.
          </Callout>
          <TextareaField
            label="Reason"
            required
            hint="e.g. the clinical event that needs the treatment known."
            error={errors.reason?.message}
            autoFocus
            {...register('reason')}
          />
          <CheckboxField
            label="I understand that this reveals the arm and is recorded."
            checked={confirmed}
            onChange={(e) => setConfirmed(e.target.checked)}
          />
          <FormAlert message={formError} />
          <div className="flex flex-wrap gap-2">
            <Button type="submit" variant="danger" disabled={!confirmed} busy={unblind.isPending}>
              Unblind this participant
            </Button>
            <Button variant="secondary" onClick={close}>
              Cancel
            </Button>
          </div>
        </form>
      </Dialog>
    </div>
  );
}
