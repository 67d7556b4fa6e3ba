import { useMemo, useState } from 'react';
import { useForm, type Path } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import { outcomeRowSchema, type OutcomesPutResponse } from '@counterpoise/contracts/analysis';
import { reasonSchema } from '@counterpoise/contracts/common';
import { utcToday } from '@counterpoise/contracts/participants';
import { Button } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { TextareaField, TextField } from '../../../components/ui/field.js';
import { errorMessage } from '../../../lib/form-errors.js';
import { useRecordOutcomes } from '../api/record-outcomes.js';
import { needsReason, rowIssues } from './chunked-send.js';
import { parseValueCell } from './outcome-csv.js';

type Draft = { participantCode: string; value: string; measuredOn: string; reason: string };
type Entry = { participantCode: string; value: number; measuredOn: string; reason: string };

const rowFields = ['participantCode', 'value', 'measuredOn'] as const;

/** The form checks with the contract's row schema; the value is typed as text (a decimal comma is fine). */
function entrySchema(today: string, withReason: boolean) {
  const { participantCode, value, measuredOn } = outcomeRowSchema.shape;
  return z
    .object({
      participantCode,
      value: z
        .string()
        .transform((text, ctx) => {
          const parsed = parseValueCell(text, ';');
          if ('error' in parsed) {
            ctx.addIssue({ code: 'custom', message: parsed.error });
            return z.NEVER;
          }
          return parsed.value;
        })
        .pipe(value),
      measuredOn: z
        .string()
        .trim()
        .min(1, 'Enter the date of the measurement')
        .pipe(measuredOn)
        .refine((d) => d <= today, 'The measurement date is in the future'),
      reason: z.string(),
    })
    .superRefine((d, ctx) => {
      if (!withReason) return;
      const reason = reasonSchema.safeParse(d.reason);
      if (!reason.success) {
        ctx.addIssue({
          code: 'custom',
          path: ['reason'],
          message: reason.error.issues[0]?.message ?? 'Give a reason',
        });
      }
    });
}

/** One value for one participant; a correction of a recorded value asks for a reason first. */
export function SingleOutcomeForm({
  studyId,
  outcomeKey,
  label,
  unit,
}: {
  studyId: string;
  outcomeKey: string;
  label: string;
  unit: string | null;
}) {
  const record = useRecordOutcomes(studyId);
  const today = utcToday();
  const [askReason, setAskReason] = useState(false);
  const [formError, setFormError] = useState<string | null>(null);
  const [done, setDone] = useState<{
    code: string;
    value: number;
    measuredOn: string;
    result: OutcomesPutResponse;
  } | null>(null);
  const schema = useMemo(() => entrySchema(today, askReason), [today, askReason]);
  const form = useForm<Draft, unknown, Entry>({
    resolver: zodResolver(schema),
    defaultValues: { participantCode: '', value: '', measuredOn: today, reason: '' },
  });
  const { errors } = form.formState;

  const onSubmit = form.handleSubmit(async (entry) => {
    setFormError(null);
    setDone(null);
    const row = { participantCode: entry.participantCode, value: entry.value, measuredOn: entry.measuredOn };
    try {
      const result = await record.mutateAsync({
        outcomeKey,
        rows: [row],
        ...(askReason ? { reason: entry.reason.trim() } : {}),
      });
      setDone({ code: row.participantCode, value: row.value, measuredOn: row.measuredOn, result });
      setAskReason(false);
      form.reset({ participantCode: '', value: '', measuredOn: entry.measuredOn, reason: '' });
      form.setFocus('participantCode');
    } catch (error) {
      if (needsReason(error)) {
        setAskReason(true);
        // The field appears on this render; focus it on the next.
        setTimeout(() => form.setFocus('reason'), 0);
        return;
      }
      let placed = 0;
      for (const issue of rowIssues(error)) {
        const [head, , field] = issue.path;
        const name = head === 'rows' ? field : head;
        if (name && ([...rowFields, 'reason'] as string[]).includes(name)) {
          form.setError(
            name as Path<Draft>,
            { type: 'server', message: issue.message },
            { shouldFocus: placed === 0 },
          );
          placed++;
        }
      }
      if (!placed) setFormError(errorMessage(error));
    }
  });

  const valueLabel = unit ? `Value (${unit})` : 'Value';
  return (
    <Card>
      <CardHeader title="Record one outcome" description={`${label}, for one participant at a time.`} />
      <CardBody>
        <form onSubmit={onSubmit} noValidate className="flex flex-col gap-4" aria-label="Record one outcome">
          <div className="grid gap-4 sm:grid-cols-[minmax(0,1.4fr)_minmax(0,1fr)_minmax(0,1fr)]">
            <TextField
              label="Participant code"
              required
              autoComplete="off"
              spellCheck={false}
              className="figure"
              error={errors.participantCode?.message}
              {...form.register('participantCode')}
            />
            <TextField
              label={valueLabel}
              required
              inputMode="decimal"
              autoComplete="off"
              className="figure"
              error={errors.value?.message}
              {...form.register('value')}
            />
            <TextField
              label="Measured on"
              type="date"
              required
              max={today}
              className="figure"
              error={errors.measuredOn?.message}
              {...form.register('measuredOn')}
            />
          </div>
          {askReason && (
            <>
              <Callout tone="caution" role="status" title="A value is already recorded for this participant">
                Saving changes it. Give a reason for the correction; it is kept in the audit trail with the
                old and the new value.
              </Callout>
              <TextareaField
                label="Reason for the correction"
                required
                error={errors.reason?.message}
                {...form.register('reason')}
              />
            </>
          )}
          {/* Live regions stay in the page so news is announced; empty, they take no room. */}
          <div aria-live="assertive" aria-atomic="true" className="empty:-mt-4">
            {formError && (
              <Callout tone="danger" title="The outcome was not recorded">
                {formError}
              </Callout>
            )}
          </div>
          <div aria-live="polite" className="empty:-mt-4">
            {done && <DoneNote done={done} unit={unit} />}
          </div>
          <div className="flex flex-wrap gap-2">
            <Button type="submit" busy={record.isPending}>
              {askReason ? 'Correct the outcome' : 'Record outcome'}
            </Button>
            {askReason && (
              <Button
                variant="secondary"
                onClick={() => {
                  setAskReason(false);
                  form.clearErrors();
                  form.setValue('reason', '');
                }}
              >
                Keep the recorded value
              </Button>
            )}
          </div>
        </form>
      </CardBody>
    </Card>
  );
}

function DoneNote({
  done,
  unit,
}: {
  done: { code: string; value: number; measuredOn: string; result: OutcomesPutResponse };
  unit: string | null;
}) {
  const what = (
    <>
      <span className="figure">
        {done.value.toLocaleString('en', { maximumFractionDigits: 6 })}
        {unit ? ` ${unit}` : ''}
      </span>{' '}
      for <span className="figure font-semibold">{done.code}</span>, measured on{' '}
      <span className="figure">{done.measuredOn}</span>
    </>
  );
  if (done.result.unchanged > 0) {
    return (
      <Callout tone="info" role="status" title="Already recorded">
        {what} was already recorded exactly so; nothing changed.
      </Callout>
    );
  }
  return (
    <Callout
      tone="success"
      role="status"
      title={done.result.corrected > 0 ? 'Outcome corrected' : 'Outcome recorded'}
    >
      {what}.{done.result.corrected > 0 && ' The old value and your reason are in the audit trail.'}
    </Callout>
  );
}
