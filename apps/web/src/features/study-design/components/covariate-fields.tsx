import { useFieldArray, useFormContext, useWatch } from 'react-hook-form';
import { Badge } from '../../../components/ui/badge.js';
import { Button } from '../../../components/ui/button.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { CheckboxField, SelectField, TextareaField, TextField } from '../../../components/ui/field.js';
import { newCovariate, type DesignDraft } from './design-draft.js';
import { firstMessage } from './form-messages.js';
import { ListError } from './list-error.js';

function CovariateRow({ index, onRemove, locked }: { index: number; onRemove: () => void; locked: boolean }) {
  const {
    register,
    control,
    formState: { errors },
  } = useFormContext<DesignDraft>();
  const kind = useWatch({ control, name: `covariates.${index}.kind` });
  const key = useWatch({ control, name: `covariates.${index}.key` });
  const e = errors.covariates?.[index];

  return (
    <fieldset className="flex flex-col gap-4 rounded-card border border-rule bg-paper/40 p-4">
      <legend className="px-1 text-sm font-semibold text-ink">
        Covariate {index + 1}
        {key ? <span className="figure ml-2 font-normal text-graphite">{key}</span> : null}
      </legend>
      <div className="grid gap-3 sm:grid-cols-[12rem_1fr_11rem]">
        <TextField
          label="Key"
          hint="Lower-case, used in exports"
          className="figure"
          readOnly={locked}
          error={e?.key?.message}
          {...register(`covariates.${index}.key`)}
        />
        <TextField label="Label" error={e?.label?.message} {...register(`covariates.${index}.label`)} />
        <SelectField label="Kind" disabled={locked} {...register(`covariates.${index}.kind`)}>
          <option value="continuous">Continuous</option>
          <option value="binary">Binary (yes/no)</option>
          <option value="categorical">Categorical</option>
        </SelectField>
      </div>

      {kind === 'continuous' && (
        <div className="grid gap-3 sm:grid-cols-4">
          <TextField label="Unit" error={e?.unit?.message} {...register(`covariates.${index}.unit`)} />
          <TextField
            label="Lowest valid value"
            inputMode="decimal"
            error={firstMessage(e?.min)}
            {...register(`covariates.${index}.min`)}
          />
          <TextField
            label="Highest valid value"
            inputMode="decimal"
            error={firstMessage(e?.max)}
            {...register(`covariates.${index}.max`)}
          />
          <TextField
            label="Decimal places"
            type="number"
            min={0}
            max={6}
            error={e?.decimals?.message}
            {...register(`covariates.${index}.decimals`, { valueAsNumber: true })}
          />
        </div>
      )}
      {kind === 'categorical' && (
        <TextareaField
          label="Levels"
          hint="One level per line, at least two."
          error={firstMessage(e?.levels)}
          rows={3}
          {...register(`covariates.${index}.levels`)}
        />
      )}

      <div className="grid gap-3 sm:grid-cols-3">
        <TextField
          label="Window: days before enrollment"
          type="number"
          min={0}
          hint="How early a measurement still counts as baseline."
          error={e?.windowDaysBefore?.message}
          {...register(`covariates.${index}.windowDaysBefore`, { valueAsNumber: true })}
        />
        <TextField
          label="Window: days after enrollment"
          type="number"
          min={0}
          hint="0 means no later than the enrollment date."
          error={e?.windowDaysAfter?.message}
          {...register(`covariates.${index}.windowDaysAfter`, { valueAsNumber: true })}
        />
        <TextField
          label="Reliability (0-1)"
          inputMode="decimal"
          hint="Test-retest or inter-rater, if known."
          error={firstMessage(e?.reliability)}
          {...register(`covariates.${index}.reliability`)}
        />
      </div>

      <div className="flex flex-wrap gap-x-6 gap-y-3">
        <CheckboxField label="Required" {...register(`covariates.${index}.required`)} />
        <CheckboxField
          label="Stratification factor"
          hint={
            locked
              ? 'Locked once participants are enrolled.'
              : kind === 'continuous'
                ? 'Only binary or categorical covariates can stratify.'
                : undefined
          }
          disabled={locked}
          {...register(`covariates.${index}.isStratification`)}
        />
        <CheckboxField
          label="Pre-specified adjustment covariate"
          {...register(`covariates.${index}.isAdjustment`)}
        />
        <CheckboxField
          label="Baseline value of the outcome"
          {...register(`covariates.${index}.isOutcomeBaseline`)}
        />
      </div>
      {(e?.isStratification?.message || e?.required?.message) && (
        <p role="alert" className="text-sm font-medium text-brick">
          <span aria-hidden="true">✕ </span>
          {e?.isStratification?.message ?? e?.required?.message}
        </p>
      )}
      <div>
        <Button
          variant="quiet"
          size="sm"
          onClick={onRemove}
          disabled={locked}
          aria-label={`Remove covariate ${index + 1}`}
        >
          {locked ? 'In use: cannot be removed' : 'Remove covariate'}
        </Button>
      </div>
    </fieldset>
  );
}

export function CovariatesFields({ enrolled, savedCount }: { enrolled: number; savedCount: number }) {
  const {
    control,
    formState: { errors },
  } = useFormContext<DesignDraft>();
  const covariates = useFieldArray({ control, name: 'covariates' });

  return (
    <Card>
      <CardHeader
        title="Baseline covariates"
        description="The enrollment form is generated from these definitions; the same rules check it on the server."
        actions={
          <Button variant="secondary" size="sm" onClick={() => covariates.append(newCovariate())}>
            Add covariate
          </Button>
        }
      />
      <CardBody className="flex flex-col gap-4">
        {enrolled > 0 && (
          <p className="text-sm text-graphite">
            <Badge tone="ochre">Caution</Badge> Covariates for adjustment are pre-specified before unblinding.
            An observed imbalance is not a reason to add one now (ICH E9 5.7; EMA 2015).
          </p>
        )}
        <ListError node={errors.covariates} />
        {covariates.fields.length === 0 && (
          <p className="text-sm text-graphite">No covariates defined yet.</p>
        )}
        {covariates.fields.map((field, i) => (
          <CovariateRow
            key={field.id}
            index={i}
            locked={enrolled > 0 && i < savedCount}
            onRemove={() => covariates.remove(i)}
          />
        ))}
      </CardBody>
    </Card>
  );
}

export function ScreeningQuestionsFields() {
  const {
    register,
    control,
    formState: { errors },
  } = useFormContext<DesignDraft>();
  const questions = useFieldArray({ control, name: 'screeningQuestions' });
  const kinds = useWatch({ control, name: 'screeningQuestions' });

  return (
    <Card>
      <CardHeader
        title="Screening questions"
        description="Asked at screening only, for eligibility rules that are not about a baseline covariate."
        actions={
          <Button
            variant="secondary"
            size="sm"
            onClick={() => questions.append({ key: '', label: '', kind: 'binary', levels: '' })}
          >
            Add question
          </Button>
        }
      />
      <CardBody className="flex flex-col gap-3">
        {questions.fields.length === 0 && <p className="text-sm text-graphite">No screening questions.</p>}
        {questions.fields.map((field, i) => (
          <fieldset key={field.id} className="grid items-start gap-3 sm:grid-cols-[12rem_1fr_10rem_auto]">
            <legend className="sr-only">Screening question {i + 1}</legend>
            <TextField
              label="Key"
              className="figure"
              error={errors.screeningQuestions?.[i]?.key?.message}
              {...register(`screeningQuestions.${i}.key`)}
            />
            <TextField
              label="Question"
              error={errors.screeningQuestions?.[i]?.label?.message}
              {...register(`screeningQuestions.${i}.label`)}
            />
            <SelectField label="Answer" {...register(`screeningQuestions.${i}.kind`)}>
              <option value="binary">Yes / no</option>
              <option value="number">Number</option>
              <option value="choice">Choice</option>
            </SelectField>
            <Button
              variant="quiet"
              size="sm"
              className="sm:mt-7"
              onClick={() => questions.remove(i)}
              aria-label={`Remove screening question ${i + 1}`}
            >
              Remove
            </Button>
            {kinds?.[i]?.kind === 'choice' && (
              <TextareaField
                label="Choices"
                hint="One per line."
                rows={2}
                frameClassName="sm:col-span-4"
                error={firstMessage(errors.screeningQuestions?.[i]?.levels)}
                {...register(`screeningQuestions.${i}.levels`)}
              />
            )}
          </fieldset>
        ))}
      </CardBody>
    </Card>
  );
}
