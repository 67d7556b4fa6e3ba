import { useFormContext, type FieldErrors } from 'react-hook-form';
import { z } from 'zod';
import {
  buildBaselineSchema,
  type BaselineCovariate,
  type BaselineSchemaOptions,
  type BaselineValue,
} from '@counterpoise/contracts/participants';
import { SelectField, TextField } from '../../../components/ui/field.js';

/** What the form holds per covariate: text as typed, converted only when checked. */
export type BaselineDraftEntry = { value: string; measuredOn: string };
export type BaselineDraft = Record<string, BaselineDraftEntry>;
export type BaselineWire = Record<string, { value: BaselineValue; measuredOn: string } | null | undefined>;

function convert(c: BaselineCovariate, text: string): BaselineValue | undefined {
  const t = text.trim();
  if (t === '') return undefined;
  if (c.kind === 'continuous') return Number(t.replace(',', '.'));
  if (c.kind === 'binary') return t === 'yes' ? true : t === 'no' ? false : t;
  return t;
}

/** Empty rows are left out, so a required covariate reports "X is required" from the shared schema. */
export function draftToBaseline(
  covariates: readonly BaselineCovariate[],
  draft: BaselineDraft,
): BaselineWire {
  const out: BaselineWire = {};
  for (const c of covariates) {
    const entry = draft[c.key];
    if (!entry || (entry.value.trim() === '' && entry.measuredOn.trim() === '')) continue;
    out[c.key] = { value: convert(c, entry.value) as BaselineValue, measuredOn: entry.measuredOn.trim() };
  }
  return out;
}

/**
 * The form's schema: the draft is converted and then checked by the contracts'
 * `buildBaselineSchema`, the very schema the API runs on the same values.
 */
export function baselineDraftSchema(covariates: readonly BaselineCovariate[], opts: BaselineSchemaOptions) {
  return z
    .custom<BaselineDraft>()
    .transform((d): Record<string, unknown> => draftToBaseline(covariates, d))
    .pipe(buildBaselineSchema(covariates, opts)) as unknown as z.ZodType<BaselineWire, BaselineDraft>;
}

export function emptyDraft(
  covariates: readonly BaselineCovariate[],
  prefill: Record<string, unknown> = {},
  measuredOn = '',
): BaselineDraft {
  const draft: BaselineDraft = {};
  for (const c of covariates) {
    const v = prefill[c.key];
    const text = v === undefined || v === null ? '' : typeof v === 'boolean' ? (v ? 'yes' : 'no') : String(v);
    draft[c.key] = { value: text, measuredOn: text ? measuredOn : '' };
  }
  return draft;
}

export function formatBaselineValue(c: BaselineCovariate | undefined, value: BaselineValue): string {
  if (typeof value === 'boolean') return value ? 'Yes' : 'No';
  if (typeof value === 'number') return `${value}${c?.unit ? ` ${c.unit}` : ''}`;
  return value;
}

function rangeHint(c: BaselineCovariate): string | undefined {
  if (c.kind !== 'continuous') return undefined;
  const decimals = c.decimals ?? 0;
  const unit = c.unit ? ` ${c.unit}` : '';
  return `${c.min ?? '…'} to ${c.max ?? '…'}${unit}; ${decimals === 0 ? 'whole number' : `up to ${decimals} decimals`}`;
}

/** One covariate's value and its measurement date, generated from its definition. */
export function BaselineField({
  covariate: c,
  windowText,
  name = c.key,
}: {
  covariate: BaselineCovariate;
  windowText: string;
  /** Where the entry sits in the form; the covariate key unless the form nests it. */
  name?: string;
}) {
  const {
    register,
    formState: { errors },
  } = useFormContext<BaselineDraft>();
  const e = (errors as FieldErrors<BaselineDraft>)[name];
  const entryError = e && typeof e.message === 'string' ? e.message : undefined;
  const valueError = e?.value?.message ?? entryError;
  const label = (
    <>
      {c.label}
      {c.kind === 'continuous' && c.unit ? (
        <span className="font-normal text-graphite"> ({c.unit})</span>
      ) : null}
    </>
  );

  return (
    <fieldset className="grid items-start gap-3 border-b border-rule pb-4 last:border-b-0 sm:grid-cols-[1fr_12rem]">
      <legend className="sr-only">{c.label}</legend>
      {c.kind === 'continuous' && (
        <TextField
          label={label}
          required={c.required}
          inputMode="decimal"
          hint={rangeHint(c)}
          error={valueError}
          {...register(`${name}.value`)}
        />
      )}
      {c.kind === 'binary' && (
        <SelectField label={label} required={c.required} error={valueError} {...register(`${name}.value`)}>
          <option value="">{c.required ? 'Choose…' : 'Not recorded'}</option>
          <option value="yes">Yes</option>
          <option value="no">No</option>
        </SelectField>
      )}
      {c.kind === 'categorical' && (
        <SelectField label={label} required={c.required} error={valueError} {...register(`${name}.value`)}>
          <option value="">{c.required ? 'Choose…' : 'Not recorded'}</option>
          {(c.levels ?? []).map((level) => (
            <option key={level} value={level}>
              {level}
            </option>
          ))}
        </SelectField>
      )}
      <TextField
        label={`Measured on`}
        type="date"
        required={c.required}
        hint={windowText}
        error={e?.measuredOn?.message}
        aria-label={`${c.label}: measured on`}
        {...register(`${name}.measuredOn`)}
      />
    </fieldset>
  );
}
