import { useState } from 'react';
import { useForm } from 'react-hook-form';
import type { StudyDetail } from '../../../lib/study-detail.js';
import type { ScreeningDto } from '@counterpoise/contracts/participants';
import { Button } from '../../../components/ui/button.js';
import { SelectField, TextField } from '../../../components/ui/field.js';
import { FormAlert } from '../../../components/ui/form-alert.js';
import { isApiError } from '../../../lib/api-client.js';
import { errorMessage } from '../../../lib/form-errors.js';
import { useCreateScreening } from '../api/create-screening.js';

type Question = {
  key: string;
  label: string;
  kind: 'number' | 'yesno' | 'choice';
  levels: string[];
  hint?: string;
  /** Named by an eligibility criterion, so it must be answered. */
  needed: boolean;
};

/** What is asked at screening: every field a criterion names, and every screening question. */
export function screeningQuestions(study: StudyDetail): Question[] {
  const needed = new Set(study.eligibility.map((c) => c.field));
  const out: Question[] = [];
  for (const c of study.covariates) {
    if (!needed.has(c.key)) continue;
    out.push({
      key: c.key,
      label: c.label + (c.kind === 'continuous' && c.unit ? ` (${c.unit})` : ''),
      kind: c.kind === 'continuous' ? 'number' : c.kind === 'binary' ? 'yesno' : 'choice',
      levels: c.levels ?? [],
      ...(c.kind === 'continuous'
        ? { hint: `${c.min ?? '…'} to ${c.max ?? '…'}${c.unit ? ` ${c.unit}` : ''}` }
        : {}),
      needed: true,
    });
  }
  for (const q of study.screeningQuestions) {
    out.push({
      key: q.key,
      label: q.label,
      kind: q.kind === 'number' ? 'number' : q.kind === 'binary' ? 'yesno' : 'choice',
      levels: q.levels ?? [],
      needed: needed.has(q.key),
    });
  }
  return out;
}

type ScreenDraft = { siteId: string; answers: Record<string, string> };

export type ScreeningOutcome = {
  screening: ScreeningDto;
  answers: Record<string, number | string | boolean>;
};

export function ScreeningStep({
  study,
  sites,
  onScreened,
}: {
  study: StudyDetail;
  sites: { id: string; code: string; name: string }[];
  onScreened: (outcome: ScreeningOutcome) => void;
}) {
  const questions = screeningQuestions(study);
  const screen = useCreateScreening(study.id);
  const [formError, setFormError] = useState<string | null>(null);
  const [formExtra, setFormExtra] = useState<string[]>([]);
  const {
    register,
    handleSubmit,
    setError,
    clearErrors,
    formState: { errors },
  } = useForm<ScreenDraft>({
    defaultValues: {
      siteId: sites.length === 1 ? sites[0]!.id : '',
      answers: Object.fromEntries(questions.map((q) => [q.key, ''])),
    },
  });

  const onSubmit = handleSubmit(async (draft) => {
    setFormError(null);
    setFormExtra([]);
    clearErrors();
    const answers: Record<string, number | string | boolean> = {};
    let missing = false;
    for (const q of questions) {
      const text = (draft.answers[q.key] ?? '').trim();
      if (text === '') {
        if (q.needed) {
          setError(`answers.${q.key}`, { message: `Answer this to check eligibility` });
          missing = true;
        }
        continue;
      }
      if (q.kind === 'number') {
        const n = Number(text.replace(',', '.'));
        if (!Number.isFinite(n)) {
          setError(`answers.${q.key}`, { message: 'Enter a number' });
          missing = true;
          continue;
        }
        answers[q.key] = n;
      } else if (q.kind === 'yesno') answers[q.key] = text === 'yes';
      else answers[q.key] = text;
    }
    if (!draft.siteId) {
      setError('siteId', { message: 'Choose the site' });
      missing = true;
    }
    if (missing) return;
    try {
      const screening = await screen.mutateAsync({
        studyId: study.id,
        body: { siteId: draft.siteId, answers },
      });
      onScreened({ screening, answers });
    } catch (error) {
      const unmatched: string[] = [];
      if (isApiError(error, 'validation_failed')) {
        for (const issue of error.fieldIssues()) {
          const [head, key] = issue.path;
          if (head === 'answers' && key) setError(`answers.${key}`, { message: issue.message });
          else if (head === 'siteId') setError('siteId', { message: issue.message });
          else unmatched.push(issue.message);
        }
      }
      setFormExtra(unmatched);
      setFormError(errorMessage(error));
    }
  });

  return (
    <form onSubmit={onSubmit} noValidate className="flex flex-col gap-5" aria-label="Screening">
      <SelectField label="Site" required error={errors.siteId?.message} {...register('siteId')}>
        <option value="">Choose…</option>
        {sites.map((s) => (
          <option key={s.id} value={s.id}>
            {s.code} · {s.name}
          </option>
        ))}
      </SelectField>
      <fieldset className="flex flex-col gap-4">
        <legend className="mb-2 text-base font-semibold text-ink">Screening answers</legend>
        {questions.length === 0 && (
          <p className="text-sm text-graphite">This study asks nothing at screening.</p>
        )}
        <div className="grid gap-4 sm:grid-cols-2">
          {questions.map((q) => {
            const error = errors.answers?.[q.key]?.message;
            if (q.kind === 'number') {
              return (
                <TextField
                  key={q.key}
                  label={q.label}
                  required={q.needed}
                  inputMode="decimal"
                  hint={q.hint}
                  error={error}
                  {...register(`answers.${q.key}`)}
                />
              );
            }
            return (
              <SelectField
                key={q.key}
                label={q.label}
                required={q.needed}
                error={error}
                {...register(`answers.${q.key}`)}
              >
                <option value="">Choose…</option>
                {q.kind === 'yesno' ? (
                  <>
                    <option value="yes">Yes</option>
                    <option value="no">No</option>
                  </>
                ) : (
                  q.levels.map((l) => (
                    <option key={l} value={l}>
                      {l}
                    </option>
                  ))
                )}
              </SelectField>
            );
          })}
        </div>
      </fieldset>
      <FormAlert message={formError} extra={formExtra} />
      <div>
        <Button type="submit" busy={screen.isPending}>
          Check eligibility
        </Button>
      </div>
    </form>
  );
}
