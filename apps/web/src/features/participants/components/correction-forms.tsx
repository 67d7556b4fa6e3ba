import { useMemo, useState } from 'react';
import { FormProvider, useForm, type FieldErrors } from 'react-hook-form';
import { z } from 'zod';
import { zodResolver } from '@hookform/resolvers/zod';
import { reasonSchema } from '@counterpoise/contracts/common';
import type { CovariateDto } from '@counterpoise/contracts/design';
import { buildBaselineSchema, type ParticipantDetail } from '@counterpoise/contracts/participants';
import { Button } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { Dialog } from '../../../components/ui/dialog.js';
import { SelectField, TextareaField } from '../../../components/ui/field.js';
import { FormAlert } from '../../../components/ui/form-alert.js';
import { applyServerFieldErrors, errorMessage } from '../../../lib/form-errors.js';
import { useUpdateParticipant } from '../api/update-participant.js';
import { BaselineField, draftToBaseline, type BaselineDraftEntry } from './baseline-fields.js';
import { utcDate } from './participant-labels.js';

type CorrectionDraft = { entry: BaselineDraftEntry; reason: string };

/** A baseline correction: one covariate at a time, with a reason; audited with old and new values. */
export function CorrectionForm({
  studyId,
  participant,
  covariates,
}: {
  studyId: string;
  participant: ParticipantDetail;
  covariates: CovariateDto[];
}) {
  const [key, setKey] = useState(covariates[0]?.key ?? '');
  const covariate = covariates.find((c) => c.key === key);
  return (
    <div className="flex flex-col gap-4">
      <SelectField label="Covariate to correct" value={key} onChange={(e) => setKey(e.target.value)}>
        {covariates.map((c) => (
          <option key={c.key} value={c.key}>
            {c.label}
          </option>
        ))}
      </SelectField>
      {covariate && (
        <CorrectionFields
          key={covariate.key}
          studyId={studyId}
          participant={participant}
          covariate={covariate}
        />
      )}
    </div>
  );
}

function CorrectionFields({
  studyId,
  participant,
  covariate,
}: {
  studyId: string;
  participant: ParticipantDetail;
  covariate: CovariateDto;
}) {
  const update = useUpdateParticipant(studyId);
  const [formError, setFormError] = useState<string | null>(null);
  const [done, setDone] = useState<string | null>(null);
  const enrollmentDate = utcDate(participant.enrolledAt ?? participant.screenedAt);
  const current = participant.baseline[covariate.key];
  const schema = useMemo(() => {
    const baseline = buildBaselineSchema([covariate], { enrollmentDate, partial: false });
    return z
      .custom<CorrectionDraft>()
      .transform((d): { baseline: Record<string, unknown>; reason: string } => ({
        baseline: draftToBaseline([covariate], { [covariate.key]: d.entry }),
        reason: d.reason,
      }))
      .pipe(z.object({ baseline, reason: reasonSchema }));
  }, [covariate, enrollmentDate]);

  const form = useForm<CorrectionDraft>({
    defaultValues: {
      entry: {
        value:
          current === undefined
            ? ''
            : typeof current.value === 'boolean'
              ? current.value
                ? 'yes'
                : 'no'
              : String(current.value),
        measuredOn: current?.measuredOn ?? '',
      },
      reason: '',
    },
    // The shared schema reports paths like baseline.<key>.value; put them on this form's fields.
    resolver: async (values) => {
      const parsed = schema.safeParse(values);
      if (parsed.success) return { values, errors: {} };
      const errors: Record<
        string,
        Record<string, { type: string; message: string }> | { type: string; message: string }
      > = {};
      for (const issue of parsed.error.issues) {
        const [head, , field] = issue.path.map(String);
        const error = { type: 'schema', message: issue.message };
        if (head === 'reason') errors.reason ??= error;
        else {
          const slot = (errors.entry ??= {}) as Record<string, { type: string; message: string }>;
          slot[field === 'measuredOn' ? 'measuredOn' : 'value'] ??= error;
        }
      }
      return { values: {}, errors: errors as FieldErrors<CorrectionDraft> };
    },
  });

  const onSubmit = form.handleSubmit(async (values) => {
    setFormError(null);
    setDone(null);
    const entry = draftToBaseline([covariate], { [covariate.key]: values.entry })[covariate.key];
    if (!entry) return;
    try {
      await update.mutateAsync({
        studyId,
        participantId: participant.id,
        body: { action: 'correct', reason: values.reason, baseline: { [covariate.key]: entry } },
      });
      setDone(`${covariate.label} was corrected; the old and new values are in the history.`);
      form.setValue('reason', '');
    } catch (error) {
      applyServerFieldErrors(error, form.setError, ['reason']);
      setFormError(errorMessage(error));
    }
  });

  const windowText = `Within ${covariate.windowDaysBefore} days before${covariate.windowDaysAfter ? ` and ${covariate.windowDaysAfter} after` : ''} enrollment (${enrollmentDate}).`;
  return (
    <FormProvider {...form}>
      <form
        onSubmit={onSubmit}
        noValidate
        className="flex flex-col gap-4"
        aria-label={`Correct ${covariate.label}`}
      >
        <BaselineField covariate={covariate} windowText={windowText} name="entry" />
        <TextareaField
          label="Reason for the correction"
          required
          hint="Recorded in the audit trail with the old and new value."
          error={form.formState.errors.reason?.message}
          {...form.register('reason')}
        />
        <FormAlert message={formError} />
        <div aria-live="polite">
          {done && (
            <Callout tone="success" role="status">
              {done}
            </Callout>
          )}
        </div>
        <div>
          <Button type="submit" busy={update.isPending}>
            Save correction
          </Button>
        </div>
      </form>
    </FormProvider>
  );
}

const withdrawSchema = z.object({ reason: reasonSchema });

/** Withdrawal stops further data entry and keeps everything already collected. */
export function WithdrawForm({ studyId, participant }: { studyId: string; participant: ParticipantDetail }) {
  const update = useUpdateParticipant(studyId);
  const [open, setOpen] = useState(false);
  const [formError, setFormError] = useState<string | null>(null);
  const {
    register,
    handleSubmit,
    setError,
    formState: { errors },
  } = useForm({ resolver: zodResolver(withdrawSchema), defaultValues: { reason: '' } });

  const onSubmit = handleSubmit(async ({ reason }) => {
    setFormError(null);
    try {
      await update.mutateAsync({
        studyId,
        participantId: participant.id,
        body: { action: 'withdraw', reason },
      });
      setOpen(false);
    } catch (error) {
      applyServerFieldErrors(error, setError, ['reason']);
      setFormError(errorMessage(error));
    }
  });

  return (
    <>
      <div>
        <Button variant="secondary" onClick={() => setOpen(true)}>
          Withdraw participant…
        </Button>
      </div>
      <Dialog open={open} onClose={() => setOpen(false)} title={`Withdraw ${participant.code}`}>
        <form onSubmit={onSubmit} noValidate className="flex flex-col gap-4">
          <p className="text-sm text-graphite">
            No further data can be entered for this participant. Everything collected so far is kept, and the
            participant stays in the analysis population the protocol defines.
          </p>
          <TextareaField
            label="Reason for withdrawal"
            required
            autoFocus
            error={errors.reason?.message}
            {...register('reason')}
          />
          <FormAlert message={formError} />
          <div className="flex flex-wrap gap-2">
            <Button type="submit" variant="danger" busy={update.isPending}>
              Withdraw
            </Button>
            <Button variant="secondary" onClick={() => setOpen(false)}>
              Cancel
            </Button>
          </div>
        </form>
      </Dialog>
    </>
  );
}
