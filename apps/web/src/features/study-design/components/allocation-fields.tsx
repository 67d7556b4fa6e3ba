import { useFieldArray, useFormContext, useWatch, type UseFormRegisterReturn } from 'react-hook-form';
import { fullAllocation, type StudyDetail } from '../../../lib/study-detail.js';
import { Button } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { CheckboxField, SelectField, TextField } from '../../../components/ui/field.js';
import { draftStrata, type DesignDraft } from './design-draft.js';
import { messagesUnder } from './form-messages.js';

function Messages({ node }: { node: unknown }) {
  const list = messagesUnder(node);
  if (list.length === 0) return null;
  return (
    <ul role="alert" className="flex flex-col gap-1 text-sm font-medium text-brick">
      {list.map((m) => (
        <li key={m}>
          <span aria-hidden="true">✕ </span>
          {m}
        </li>
      ))}
    </ul>
  );
}

function RadioOption({
  value,
  label,
  hint,
  ...rest
}: { value: string; label: string; hint: string } & UseFormRegisterReturn) {
  const id = `allocation-method-${value}`;
  return (
    <div className="flex items-start gap-2.5">
      <input
        id={id}
        type="radio"
        value={value}
        className="mt-1 size-4 accent-spruce"
        aria-describedby={`${id}-hint`}
        {...rest}
      />
      <div>
        <label htmlFor={id} className="text-sm font-semibold text-ink">
          {label}
        </label>
        <p id={`${id}-hint`} className="text-sm text-graphite">
          {hint}
        </p>
      </div>
    </div>
  );
}

export function AllocationFields({ study, locked }: { study: StudyDetail; locked: boolean }) {
  const {
    register,
    control,
    formState: { errors },
  } = useFormContext<DesignDraft>();
  const method = useWatch({ control, name: 'allocation.method' });
  const covariates = useWatch({ control, name: 'covariates' });
  const factors = useFieldArray({ control, name: 'allocation.factors' });
  const e = errors.allocation;
  const factorOptions = [
    { key: 'site', label: 'Site' },
    ...(covariates ?? [])
      .filter((c) => c.key && c.required && c.kind !== 'continuous')
      .map((c) => ({ key: c.key, label: c.label || c.key })),
  ];
  const randomized = study.kind === 'randomized_trial';
  const stored = fullAllocation(study);

  return (
    <Card>
      <CardHeader
        title={randomized ? 'Allocation scheme' : 'Exposure groups'}
        description={
          randomized
            ? 'Central and concealed: sites never see block sizes or the sequence (ICH E9 2.3.1; CONSORT 2010 items 9-10).'
            : 'An observational cohort records each participant’s exposure group; nothing is allocated.'
        }
      />
      <CardBody className="flex flex-col gap-5">
        {locked && (
          <p className="text-sm text-graphite">
            Locked: the allocation scheme cannot change once participants are enrolled, so that every
            allocation already given can be reproduced.
          </p>
        )}
        <fieldset disabled={locked} className="flex flex-col gap-5">
          <legend className="sr-only">Allocation settings</legend>
          {randomized ? (
            <fieldset className="flex flex-col gap-3">
              <legend className="mb-2 text-sm font-semibold text-ink">Method</legend>
              <RadioOption
                value="permuted_blocks"
                label="Stratified permuted blocks"
                hint="Block sizes mixed at random within each stratum."
                {...register('allocation.method')}
              />
              <RadioOption
                value="minimization"
                label="Minimization (Pocock-Simon)"
                hint="Gives the arm that reduces factor imbalance, with a random element always."
                {...register('allocation.method')}
              />
            </fieldset>
          ) : (
            <input type="hidden" value="exposure_recorded" {...register('allocation.method')} />
          )}

          {method === 'permuted_blocks' && (
            <div className="grid gap-4 sm:grid-cols-2">
              <TextField
                label="Block sizes"
                hint="Comma-separated, e.g. 4, 6. Each must be a multiple of the sum of the arm ratios."
                className="figure"
                {...register('allocation.blockSizes')}
              />
              <div className="sm:pt-7">
                <CheckboxField
                  label="Stratify by site"
                  hint="Strata are the combinations of the stratification factors, and the site if ticked."
                  {...register('allocation.stratifyBySite')}
                />
              </div>
              <div className="sm:col-span-2">
                <Messages node={e && 'blockSizes' in e ? e.blockSizes : undefined} />
              </div>
            </div>
          )}

          {method === 'minimization' && (
            <div className="flex flex-col gap-4">
              <fieldset className="flex flex-col gap-3">
                <legend className="mb-1 text-sm font-semibold text-ink">Factors and weights</legend>
                <p className="text-sm text-graphite">
                  Required binary or categorical covariates, or the site.
                </p>
                {factors.fields.map((field, i) => (
                  <div key={field.id} className="grid items-start gap-3 sm:grid-cols-[1fr_8rem_auto]">
                    <SelectField label={`Factor ${i + 1}`} {...register(`allocation.factors.${i}.factor`)}>
                      {factorOptions.map((o) => (
                        <option key={o.key} value={o.key}>
                          {o.label}
                        </option>
                      ))}
                    </SelectField>
                    <TextField
                      label="Weight"
                      type="number"
                      min={0.1}
                      step="any"
                      {...register(`allocation.factors.${i}.weight`, { valueAsNumber: true })}
                    />
                    <Button
                      variant="quiet"
                      size="sm"
                      className="sm:mt-7"
                      onClick={() => factors.remove(i)}
                      disabled={factors.fields.length <= 1}
                      aria-label={`Remove factor ${i + 1}`}
                    >
                      Remove
                    </Button>
                  </div>
                ))}
                <div>
                  <Button
                    variant="secondary"
                    size="sm"
                    onClick={() => factors.append({ factor: 'site', weight: 1 })}
                    disabled={factors.fields.length >= 6}
                  >
                    Add factor
                  </Button>
                </div>
              </fieldset>
              <div className="grid gap-4 sm:grid-cols-2">
                <TextField
                  label="Probability of the preferred arm"
                  type="number"
                  min={0.51}
                  max={0.99}
                  step={0.01}
                  hint="Above 0.5 and below 1, so allocation stays random (ICH E9). Pocock (1979) uses 0.75."
                  {...register('allocation.probability', { valueAsNumber: true })}
                />
                <SelectField label="Imbalance measure" {...register('allocation.imbalance')}>
                  <option value="range">Range</option>
                  <option value="variance">Variance</option>
                </SelectField>
              </div>
              <Messages
                node={e && ('factors' in e || 'weights' in e || 'probability' in e) ? e : undefined}
              />
            </div>
          )}

          {method === 'exposure_recorded' && (
            <SelectField
              label="Weighting estimand for balance"
              hint="Which population the propensity-score weights describe."
              {...register('allocation.estimand')}
            >
              <option value="ATE">ATE: the whole cohort</option>
              <option value="ATT">ATT: those exposed</option>
              <option value="overlap">Overlap weights: those who could plausibly be in either group</option>
            </SelectField>
          )}
        </fieldset>

        {stored?.seed && (
          <dl className="grid gap-2 rounded-control border border-rule bg-paper/50 p-3 text-sm sm:grid-cols-3">
            <div>
              <dt className="text-xs font-semibold text-graphite uppercase">Algorithm</dt>
              <dd className="figure">{stored.algorithm ?? '—'}</dd>
            </div>
            <div>
              <dt className="text-xs font-semibold text-graphite uppercase">Version</dt>
              <dd className="figure">{stored.algorithmVersion ?? '—'}</dd>
            </div>
            <div>
              <dt className="text-xs font-semibold text-graphite uppercase">
                Seed (stored, for reproduction)
              </dt>
              <dd className="figure break-all">{stored.seed}</dd>
            </div>
          </dl>
        )}
      </CardBody>
    </Card>
  );
}

/** The Hallstrom & Davis bound as the API computed it for the saved design, and for the draft. */
export function StrataPlanPanel({ study }: { study: StudyDetail }) {
  const { control } = useFormContext<DesignDraft>();
  const draft = useWatch({ control }) as DesignDraft;
  const preview = draft.allocation && draft.covariates && draft.sites ? draftStrata(draft) : null;
  const plan = study.strataPlan;
  if (!plan && !preview) return null;

  return (
    <Card>
      <CardHeader
        title="Strata planner"
        description="With K strata and block size B the overall imbalance between arms is at most K × B / 2 (Hallstrom & Davis 1988)."
      />
      <CardBody className="flex flex-col gap-3">
        {plan && (
          <>
            <dl className="grid gap-3 text-sm sm:grid-cols-4">
              <div>
                <dt className="text-xs font-semibold text-graphite uppercase">Strata (K)</dt>
                <dd className="figure text-lg">{plan.strataCount}</dd>
              </div>
              <div>
                <dt className="text-xs font-semibold text-graphite uppercase">Largest block (B)</dt>
                <dd className="figure text-lg">{plan.maxBlockSize ?? '—'}</dd>
              </div>
              <div>
                <dt className="text-xs font-semibold text-graphite uppercase">Worst-case imbalance</dt>
                <dd className="figure text-lg">{plan.worstCaseImbalance ?? '—'}</dd>
              </div>
              <div>
                <dt className="text-xs font-semibold text-graphite uppercase">Per stratum at target</dt>
                <dd className="figure text-lg">{plan.perStratumAtTarget}</dd>
              </div>
            </dl>
            <p className="text-sm text-graphite">
              Factors: {plan.stratificationFactors.length ? plan.stratificationFactors.join(', ') : 'none'}{' '}
              (saved design).
            </p>
            {plan.warnings.map((w) => (
              <Callout key={w.code} tone="caution" role="note">
                {w.message}
              </Callout>
            ))}
            {plan.warnings.length === 0 && (
              <Callout tone="success" role="note">
                The planner raises no warning for the saved scheme.
              </Callout>
            )}
          </>
        )}
        {preview && (
          <p className="text-sm text-graphite" aria-live="polite">
            With the values on this page: <span className="figure">{preview.strata}</span>{' '}
            {preview.strata === 1 ? 'stratum' : 'strata'} × block size{' '}
            <span className="figure">{preview.maxBlock}</span> / 2 ={' '}
            <span className="figure font-semibold text-ink">{preview.bound}</span> participants of possible
            imbalance, against a target of <span className="figure">{draft.targetSampleSize}</span>. The
            server re-checks this when you save.
          </p>
        )}
      </CardBody>
    </Card>
  );
}
