import { useFieldArray, useFormContext } from 'react-hook-form';
import { Button } from '../../../components/ui/button.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { SelectField, TextField } from '../../../components/ui/field.js';
import type { DesignDraft } from './design-draft.js';
import { ListError } from './list-error.js';

export function ArmsFields({ hidden, locked }: { hidden: boolean; locked: boolean }) {
  const {
    register,
    control,
    formState: { errors },
  } = useFormContext<DesignDraft>();
  const arms = useFieldArray({ control, name: 'arms' });

  return (
    <Card>
      <CardHeader
        title="Arms"
        description="Two or more arms. The ratio is the relative allocation weight: 2 and 1 give a 2:1 ratio."
        actions={
          !hidden &&
          !locked && (
            <Button
              variant="secondary"
              size="sm"
              onClick={() => arms.append({ code: '', name: '', ratio: 1 })}
              disabled={arms.fields.length >= 8}
            >
              Add arm
            </Button>
          )
        }
      />
      <CardBody className="flex flex-col gap-3">
        {hidden ? (
          <p className="text-sm text-graphite">
            Arm names are hidden from your role in this blinded study. The unblinded statistician edits arms
            and the allocation scheme.
          </p>
        ) : (
          <fieldset disabled={locked} className="flex flex-col gap-3">
            <legend className="sr-only">Arms</legend>
            {locked && (
              <p className="text-sm text-graphite">
                Locked: arms and their ratios cannot change once participants are enrolled.
              </p>
            )}
            <ListError node={errors.arms} />
            {arms.fields.length === 0 && (
              <p className="text-sm text-graphite">No arms yet. Add at least two with Add arm.</p>
            )}
            {arms.fields.map((field, i) => (
              <fieldset key={field.id} className="grid items-start gap-3 sm:grid-cols-[8rem_1fr_6rem_auto]">
                <legend className="sr-only">Arm {i + 1}</legend>
                <TextField
                  label="Code"
                  error={errors.arms?.[i]?.code?.message}
                  className="figure uppercase"
                  {...register(`arms.${i}.code`)}
                />
                <TextField
                  label="Name"
                  error={errors.arms?.[i]?.name?.message}
                  {...register(`arms.${i}.name`)}
                />
                <TextField
                  label="Ratio"
                  type="number"
                  min={1}
                  max={10}
                  step={1}
                  error={errors.arms?.[i]?.ratio?.message}
                  {...register(`arms.${i}.ratio`, { valueAsNumber: true })}
                />
                <Button
                  variant="quiet"
                  size="sm"
                  className="sm:mt-7"
                  onClick={() => arms.remove(i)}
                  disabled={arms.fields.length <= 2}
                  aria-label={`Remove arm ${i + 1}`}
                >
                  Remove
                </Button>
              </fieldset>
            ))}
          </fieldset>
        )}
      </CardBody>
    </Card>
  );
}

export function SitesFields() {
  const {
    register,
    control,
    formState: { errors },
  } = useFormContext<DesignDraft>();
  const sites = useFieldArray({ control, name: 'sites' });

  return (
    <Card>
      <CardHeader
        title="Sites"
        description="Each site with its enrollment target. A paused or closed site cannot enroll."
        actions={
          <Button
            variant="secondary"
            size="sm"
            onClick={() => sites.append({ code: '', name: '', enrollmentTarget: 0, status: 'active' })}
          >
            Add site
          </Button>
        }
      />
      <CardBody className="flex flex-col gap-3">
        <ListError node={errors.sites} />
        {sites.fields.length === 0 && (
          <p className="text-sm text-graphite">No sites yet. Add each site that will enroll with Add site.</p>
        )}
        {sites.fields.map((field, i) => (
          <fieldset key={field.id} className="grid items-start gap-3 sm:grid-cols-[8rem_1fr_8rem_9rem_auto]">
            <legend className="sr-only">Site {i + 1}</legend>
            <TextField
              label="Code"
              className="figure uppercase"
              error={errors.sites?.[i]?.code?.message}
              {...register(`sites.${i}.code`)}
            />
            <TextField
              label="Name"
              error={errors.sites?.[i]?.name?.message}
              {...register(`sites.${i}.name`)}
            />
            <TextField
              label="Target"
              type="number"
              min={0}
              step={1}
              error={errors.sites?.[i]?.enrollmentTarget?.message}
              {...register(`sites.${i}.enrollmentTarget`, { valueAsNumber: true })}
            />
            <SelectField label="Status" {...register(`sites.${i}.status`)}>
              <option value="active">Active</option>
              <option value="paused">Paused</option>
              <option value="closed">Closed</option>
            </SelectField>
            <Button
              variant="quiet"
              size="sm"
              className="sm:mt-7"
              onClick={() => sites.remove(i)}
              disabled={sites.fields.length <= 1}
              aria-label={`Remove site ${i + 1}`}
            >
              Remove
            </Button>
          </fieldset>
        ))}
      </CardBody>
    </Card>
  );
}
