import { useId, useState, type ReactNode } from 'react';
import { useForm, type UseFormRegisterReturn } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { studyCreateBodySchema, type StudyCreateBody } from '@counterpoise/contracts/design';
import type { z } from 'zod';
import { Button, ButtonLink } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { TextField } from '../../../components/ui/field.js';
import { FormAlert } from '../../../components/ui/form-alert.js';
import { paths } from '../../../config/paths.js';
import { cn } from '../../../lib/cn.js';
import { applyServerFieldErrors } from '../../../lib/form-errors.js';
import type { StudyDetail } from '../../../lib/study-detail.js';
import { useCreateStudy } from '../api/create-study.js';
import { describeCreateFailure, newStudyIssueMessage } from './new-study-messages.js';

type NewStudyInput = z.input<typeof studyCreateBodySchema>;

const fields = ['code', 'title', 'kind', 'blinding', 'targetSampleSize'] as const;

const resolver = zodResolver(studyCreateBodySchema, { error: newStudyIssueMessage });

type Choice = { value: string; label: string; hint: ReactNode };

/** A radio group with a visible legend, a hint per option and one error for the group. */
function ChoiceGroup({
  legend,
  choices,
  error,
  registration,
}: {
  legend: string;
  choices: Choice[];
  error: string | undefined;
  registration: UseFormRegisterReturn;
}) {
  const id = useId();
  const errorId = `${id}-error`;
  return (
    <fieldset className="flex flex-col gap-3">
      <legend className="mb-2 text-sm font-semibold text-ink">
        {legend}
        <span className="ml-1 font-normal text-graphite" aria-hidden="true">
          (required)
        </span>
      </legend>
      <div className="grid gap-3 sm:grid-cols-2">
        {choices.map((choice) => {
          const optionId = `${id}-${choice.value}`;
          // The whole card is the click target; the radio's name is the option's label alone and
          // its hint (and the group's error) its description.
          return (
            <label
              key={choice.value}
              htmlFor={optionId}
              className={cn(
                'flex cursor-pointer items-start gap-2.5 rounded-control border bg-vellum px-3 py-3',
                'has-checked:border-spruce has-checked:bg-spruce-wash',
                error ? 'border-brick' : 'border-pebble',
              )}
            >
              <input
                id={optionId}
                type="radio"
                value={choice.value}
                className="mt-1 size-4 shrink-0 accent-spruce"
                aria-labelledby={`${optionId}-label`}
                aria-describedby={`${optionId}-hint${error ? ` ${errorId}` : ''}`}
                aria-invalid={error ? true : undefined}
                required
                {...registration}
              />
              <span className="flex flex-col gap-0.5">
                <span id={`${optionId}-label`} className="text-sm font-semibold text-ink">
                  {choice.label}
                </span>
                <span id={`${optionId}-hint`} className="text-sm text-graphite">
                  {choice.hint}
                </span>
              </span>
            </label>
          );
        })}
      </div>
      {error && (
        <p id={errorId} className="flex items-start gap-1.5 text-sm font-medium text-brick">
          <span aria-hidden="true">✕</span>
          {error}
        </p>
      )}
    </fieldset>
  );
}

const kindChoices: Choice[] = [
  {
    value: 'randomized_trial',
    label: 'Randomized trial',
    hint: 'Counterpoise allocates each participant to an arm, centrally and concealed from the sites, by the scheme you set on the Design tab.',
  },
  {
    value: 'observational_cohort',
    label: 'Observational cohort',
    hint: 'Nothing is allocated: sites record which group each participant is in (for example, started a medicine or not), and balance is compared after weighting.',
  },
];

const blindingChoices: Choice[] = [
  {
    value: 'blinded',
    label: 'Blinded',
    hint: 'Only the study’s statistician sees which arm a participant is in. Site coordinators see a kit code instead; sponsors and auditors see pooled figures. Emergency unblinding of one participant stays possible and is audited.',
  },
  {
    value: 'open_label',
    label: 'Open label',
    hint: 'Site coordinators also see the arm of their own site’s participants, but never running counts per arm. Sponsors and auditors still see pooled figures only.',
  },
];

/**
 * The first step of a new study: what the API needs to create it in set-up. Arms, sites,
 * covariates, eligibility and allocation follow on the study's Design tab.
 */
export function NewStudyForm({
  onCreated,
  isAdmin,
}: {
  onCreated: (study: StudyDetail) => void;
  isAdmin: boolean;
}) {
  const create = useCreateStudy();
  const [formError, setFormError] = useState<string | null>(null);
  const [formExtra, setFormExtra] = useState<string[]>([]);
  const {
    register,
    handleSubmit,
    setError,
    formState: { errors },
  } = useForm<NewStudyInput, unknown, StudyCreateBody>({
    resolver,
    defaultValues: { code: '', title: '' },
  });

  const onSubmit = handleSubmit(
    async (body) => {
      setFormError(null);
      setFormExtra([]);
      try {
        onCreated(await create.mutateAsync(body));
      } catch (error) {
        const failure = describeCreateFailure(error, body.code);
        const unmatched = applyServerFieldErrors(error, setError, fields);
        if (failure.codeMessage) {
          setError('code', { type: 'server', message: failure.codeMessage }, { shouldFocus: true });
        }
        setFormError(failure.formMessage);
        setFormExtra(unmatched);
      }
    },
    (invalid) => {
      // react-hook-form has already moved focus to the first field with an error.
      const count = Object.keys(invalid).length;
      setFormError(`The study was not created: ${count} answer${count === 1 ? '' : 's'} to fix.`);
      setFormExtra([]);
    },
  );

  return (
    <form onSubmit={onSubmit} noValidate className="flex flex-col gap-5" aria-label="New study">
      <Card>
        <CardHeader
          title="About the study"
          description="The code, title, kind and blinding are fixed once the study is created. The target sample size can be changed later on the Design tab."
        />
        <CardBody className="flex flex-col gap-6">
          <div className="grid gap-4 sm:grid-cols-[16rem_1fr]">
            <TextField
              label="Study code"
              required
              autoComplete="off"
              autoCapitalize="characters"
              spellCheck={false}
              maxLength={20}
              className="figure uppercase"
              hint="A short name that starts every participant code (e.g. FALCON-ALB-…) and names the study in its e-mails. Up to 20 capital letters, digits or _, starting with a letter."
              error={errors.code?.message}
              {...register('code', {
                setValueAs: (v: unknown) =>
                  String(v ?? '')
                    .trim()
                    .toUpperCase(),
              })}
            />
            <TextField
              label="Title"
              required
              autoComplete="off"
              maxLength={300}
              hint="The full title as in the protocol, as everyone in the study will see it."
              error={errors.title?.message}
              {...register('title')}
            />
          </div>

          <ChoiceGroup
            legend="Kind of study"
            choices={kindChoices}
            error={errors.kind?.message}
            registration={register('kind')}
          />

          <ChoiceGroup
            legend="Who sees the arms"
            choices={blindingChoices}
            error={errors.blinding?.message}
            registration={register('blinding')}
          />

          <TextField
            label="Target sample size"
            type="number"
            inputMode="numeric"
            required
            min={2}
            step={1}
            className="figure"
            frameClassName="sm:max-w-[16rem]"
            hint="Participants to enroll across all sites, from the protocol’s sample size calculation."
            error={errors.targetSampleSize?.message}
            {...register('targetSampleSize', { valueAsNumber: true })}
          />
        </CardBody>
      </Card>

      <Card>
        <CardBody className="flex flex-col gap-4">
          <Callout tone="info" title="Next: the design">
            {isAdmin
              ? 'After creating the study you continue on its Design tab: arms, sites, covariates, eligibility and allocation. As an administrator you do not become its statistician; give that role to someone on the Users page.'
              : 'After creating the study you become its statistician and continue on its Design tab: arms, sites, covariates, eligibility and allocation. No one can be enrolled until the design is saved.'}
          </Callout>
          <FormAlert message={formError} extra={formExtra} />
          <div className="flex flex-wrap gap-2">
            <Button type="submit" busy={create.isPending}>
              Create study
            </Button>
            <ButtonLink to={paths.studies.list.href()} variant="secondary">
              Cancel
            </ButtonLink>
          </div>
        </CardBody>
      </Card>
    </form>
  );
}
