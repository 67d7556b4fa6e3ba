import { useFieldArray, useFormContext, useWatch } from 'react-hook-form';
import { Button } from '../../../components/ui/button.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { SelectField, TextField } from '../../../components/ui/field.js';
import { fieldKinds, newCriterion, type DesignDraft } from './design-draft.js';
import { firstMessage } from './form-messages.js';

const opLabels: Record<DesignDraft['eligibility'][number]['op'], string> = {
  '>=': 'at least',
  '<=': 'at most',
  '>': 'more than',
  '<': 'less than',
  '==': 'equals',
  '!=': 'is not',
  in: 'is one of',
};

const valueHint = {
  number: 'A number',
  yesno: 'yes or no',
  choice: 'One of the levels',
  unknown: undefined,
} as const;

export function EligibilityFields() {
  const {
    register,
    control,
    formState: { errors },
  } = useFormContext<DesignDraft>();
  const criteria = useFieldArray({ control, name: 'eligibility' });
  const covariates = useWatch({ control, name: 'covariates' });
  const questions = useWatch({ control, name: 'screeningQuestions' });
  const rows = useWatch({ control, name: 'eligibility' });
  const kinds = fieldKinds({ covariates: covariates ?? [], screeningQuestions: questions ?? [] });
  const fieldOptions = [
    ...(covariates ?? [])
      .filter((c) => c.key)
      .map((c) => ({ key: c.key, label: c.label || c.key, group: 'Covariate' })),
    ...(questions ?? [])
      .filter((q) => q.key)
      .map((q) => ({ key: q.key, label: q.label || q.key, group: 'Question' })),
  ];

  return (
    <Card>
      <CardHeader
        title="Eligibility criteria"
        description="Evaluated at screening. An inclusion rule must hold; an exclusion rule excludes when it holds. A missing answer fails the rule."
        actions={
          <Button
            variant="secondary"
            size="sm"
            onClick={() => criteria.append(newCriterion(criteria.fields.length))}
          >
            Add criterion
          </Button>
        }
      />
      <CardBody className="flex flex-col gap-3">
        {criteria.fields.length === 0 && (
          <p className="text-sm text-graphite">No criteria: everyone screened is eligible.</p>
        )}
        {criteria.fields.map((field, i) => {
          const row = rows?.[i];
          const kind = (row && kinds.get(row.field)) ?? 'unknown';
          const e = errors.eligibility?.[i];
          return (
            <fieldset
              key={field.id}
              className="grid items-start gap-3 rounded-card border border-rule p-3 sm:grid-cols-6"
            >
              <legend className="px-1 text-sm font-semibold text-ink">Criterion {i + 1}</legend>
              <TextField
                label="Id"
                className="figure"
                error={e?.id?.message}
                {...register(`eligibility.${i}.id`)}
              />
              <SelectField label="Type" {...register(`eligibility.${i}.kind`)}>
                <option value="inclusion">Inclusion</option>
                <option value="exclusion">Exclusion</option>
              </SelectField>
              <TextField
                label="Wording"
                frameClassName="sm:col-span-4"
                error={e?.label?.message}
                {...register(`eligibility.${i}.label`)}
              />
              <SelectField
                label="Field"
                frameClassName="sm:col-span-2"
                error={e?.field?.message}
                {...register(`eligibility.${i}.field`)}
              >
                <option value="">Choose…</option>
                {fieldOptions.map((o) => (
                  <option key={`${o.group}-${o.key}`} value={o.key}>
                    {o.group}: {o.label}
                  </option>
                ))}
              </SelectField>
              <SelectField label="Rule" {...register(`eligibility.${i}.op`)}>
                {Object.entries(opLabels).map(([op, label]) => (
                  <option key={op} value={op}>
                    {label}
                  </option>
                ))}
              </SelectField>
              <TextField
                label="Value"
                frameClassName="sm:col-span-2"
                hint={row?.op === 'in' ? 'Comma-separated list' : valueHint[kind]}
                error={firstMessage(e?.value)}
                {...register(`eligibility.${i}.value`)}
              />
              <Button
                variant="quiet"
                size="sm"
                className="sm:mt-7"
                onClick={() => criteria.remove(i)}
                aria-label={`Remove criterion ${i + 1}`}
              >
                Remove
              </Button>
            </fieldset>
          );
        })}
      </CardBody>
    </Card>
  );
}
