import { Controller, useFieldArray, useFormContext, useWatch, type FieldErrors } from 'react-hook-form';
import type { StudyRole } from '@counterpoise/contracts/common';
import { studyOptionLabel } from '../../../lib/study-label.js';
import { Button } from '../../../components/ui/button.js';
import { SelectField } from '../../../components/ui/field.js';
import { Spinner } from '../../../components/ui/states.js';
import { useStudySites } from '../api/get-study-sites.js';

export type StudyOption = { id: string; code: string; title: string };

export type MembershipRow = { studyId: string; role: StudyRole; siteIds?: string[] | undefined };

/** The slice of both the invite and the edit-access form that this editor works on. */
type MembershipsShape = { memberships?: MembershipRow[] | undefined };

export const studyRoleOptions: { value: StudyRole; label: string; hint: string }[] = [
  { value: 'coordinator', label: 'Site coordinator', hint: 'Enrolls participants at the chosen sites only' },
  { value: 'statistician', label: 'Statistician (unblinded)', hint: 'Design, balance by arm, analysis' },
  { value: 'sponsor', label: 'Sponsor (blinded)', hint: 'Pooled figures only' },
  { value: 'auditor', label: 'Auditor (read-only)', hint: 'Audit trail and read access' },
];

export function MembershipsEditor({ studies }: { studies: StudyOption[] }) {
  const { control } = useFormContext<MembershipsShape>();
  const { fields, append, remove } = useFieldArray({ control, name: 'memberships' });

  return (
    <fieldset className="flex flex-col gap-3">
      <legend className="mb-1 text-sm font-semibold text-ink">Study roles</legend>
      {fields.length === 0 && (
        <p className="text-sm text-graphite">No study roles. The account can sign in but sees no study.</p>
      )}
      <ol className="flex flex-col gap-3">
        {fields.map((field, index) => (
          <li key={field.id}>
            <MembershipRowEditor index={index} studies={studies} onRemove={() => remove(index)} />
          </li>
        ))}
      </ol>
      <div>
        <Button
          variant="secondary"
          size="sm"
          disabled={studies.length === 0}
          onClick={() => append({ studyId: studies[0]?.id ?? '', role: 'coordinator', siteIds: [] })}
        >
          Add a study role
        </Button>
      </div>
    </fieldset>
  );
}

function MembershipRowEditor({
  index,
  studies,
  onRemove,
}: {
  index: number;
  studies: StudyOption[];
  onRemove: () => void;
}) {
  const {
    register,
    control,
    formState: { errors },
  } = useFormContext<MembershipsShape>();
  const studyId = useWatch({ control, name: `memberships.${index}.studyId` });
  const role = useWatch({ control, name: `memberships.${index}.role` });
  const rowErrors = (errors.memberships as FieldErrors<MembershipRow>[] | undefined)?.[index];

  return (
    <div className="rounded-control border border-rule bg-paper/50 p-3">
      <div className="grid gap-3 sm:grid-cols-[1fr_1fr_auto] sm:items-start">
        <SelectField
          label="Study"
          error={rowErrors?.studyId?.message}
          {...register(`memberships.${index}.studyId`)}
        >
          {studies.map((s) => (
            <option key={s.id} value={s.id}>
              {studyOptionLabel(s)}
            </option>
          ))}
        </SelectField>
        <SelectField
          label="Role"
          hint={studyRoleOptions.find((o) => o.value === role)?.hint}
          error={rowErrors?.role?.message}
          {...register(`memberships.${index}.role`)}
        >
          {studyRoleOptions.map((o) => (
            <option key={o.value} value={o.value}>
              {o.label}
            </option>
          ))}
        </SelectField>
        <Button
          variant="quiet"
          size="sm"
          onClick={onRemove}
          aria-label={`Remove study role ${index + 1}`}
          className="sm:mt-7"
        >
          Remove
        </Button>
      </div>
      {role === 'coordinator' && studyId && (
        <SitePicker index={index} studyId={studyId} error={rowErrors?.siteIds?.message} />
      )}
    </div>
  );
}

function SitePicker({
  index,
  studyId,
  error,
}: {
  index: number;
  studyId: string;
  error: string | undefined;
}) {
  const { control } = useFormContext<MembershipsShape>();
  const sites = useStudySites(studyId);
  const legendId = `memberships-${index}-sites`;

  return (
    <div className="mt-3" role="group" aria-labelledby={legendId}>
      <p id={legendId} className="mb-1.5 text-sm font-semibold text-ink">
        Sites this coordinator works at
      </p>
      {sites.isPending && (
        <p className="flex items-center gap-2 text-sm text-graphite" role="status">
          <Spinner className="size-4" /> Loading sites…
        </p>
      )}
      {sites.isError && (
        <p className="text-sm text-brick" role="alert">
          Sites could not be loaded: {sites.error.message}
        </p>
      )}
      {sites.data && (
        <Controller
          control={control}
          name={`memberships.${index}.siteIds`}
          render={({ field }) => {
            const selected = new Set(field.value ?? []);
            return (
              <div className="flex flex-wrap gap-x-5 gap-y-2">
                {sites.data.map((site) => (
                  <label key={site.id} className="flex items-center gap-2 text-sm">
                    <input
                      type="checkbox"
                      className="size-4 accent-spruce"
                      checked={selected.has(site.id)}
                      onChange={(event) => {
                        const next = new Set(selected);
                        if (event.target.checked) next.add(site.id);
                        else next.delete(site.id);
                        field.onChange([...next]);
                      }}
                      onBlur={field.onBlur}
                    />
                    <span className="figure text-xs text-clay">{site.code}</span>
                    <span>{site.name}</span>
                  </label>
                ))}
              </div>
            );
          }}
        />
      )}
      {error && <p className="mt-1 text-sm font-medium text-brick">{error}</p>}
    </div>
  );
}
