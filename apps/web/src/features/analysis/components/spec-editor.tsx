import { useEffect, useState } from 'react';
import type { AnalysisSpec, SpecResponse } from '@counterpoise/contracts/analysis';
import { Badge } from '../../../components/ui/badge.js';
import { Button } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { CheckboxField, SelectField, TextareaField, TextField } from '../../../components/ui/field.js';
import { FormAlert } from '../../../components/ui/form-alert.js';
import { isApiError } from '../../../lib/api-client.js';
import { errorMessage } from '../../../lib/form-errors.js';
import { useSaveAnalysisSpec } from '../api/save-analysis-spec.js';

type Props = { studyId: string; data: SpecResponse };

type Context = SpecResponse['context'];

/** Warnings the editor can judge from the draft itself, before it is saved (cautions 4 and 5). */
function draftWarnings(spec: AnalysisSpec, context: Context): string[] {
  const out: string[] = [];
  const keys = [
    ...(spec.baselineCovariateKey ? [spec.baselineCovariateKey] : []),
    ...spec.covariates.map((c) => c.key),
  ];
  for (const k of keys) {
    const c = context.covariates.find((x) => x.key === k);
    if (c && c.measuredAfterRandomization > 0) {
      out.push(
        `${c.label}: ${c.measuredAfterRandomization} value(s) measured after randomization. It will be kept out of the primary model (ICH E9 5.7).`,
      );
    }
  }
  if (
    !spec.includeStratificationFactors &&
    context.stratificationFactors.some((f) => !keys.includes(f.key))
  ) {
    out.push(
      `Stratification factors left out: ${context.stratificationFactors
        .filter((f) => !keys.includes(f.key))
        .map((f) => f.label)
        .join(', ')}. Factors used at randomization normally enter the model (ICH E9 2.3.1).`,
    );
  }
  return out;
}

export function SpecEditor({ studyId, data }: Props) {
  const { current, context } = data;
  const [spec, setSpec] = useState<AnalysisSpec>(current?.spec ?? data.suggestion);
  const [reason, setReason] = useState('');
  const save = useSaveAnalysisSpec(studyId);
  useEffect(() => {
    setSpec(current?.spec ?? data.suggestion);
  }, [current?.id, current?.updatedAt, current?.spec, data.suggestion]);

  const issues = isApiError(save.error, 'validation_failed') ? save.error.fieldIssues() : [];
  const issue = (path: string) => issues.find((i) => i.path.join('.') === path)?.message;
  const known = [
    'spec.outcome.key',
    'spec.outcome.label',
    'spec.outcome.unit',
    'spec.alpha',
    'reason',
    'spec.baselineCovariateKey',
  ];
  const other = issues.filter((i) => !known.includes(i.path.join('.')));
  const locked = current?.status === 'locked';
  const warnings = draftWarnings(spec, context);
  const continuous = context.covariates.filter((c) => c.kind === 'continuous');
  const chosen = new Set(spec.covariates.map((c) => c.key));

  const toggle = (key: string, kind: string, on: boolean) =>
    setSpec((s) => ({
      ...s,
      covariates: on
        ? [...s.covariates, { key, form: kind === 'categorical' ? 'categorical' : 'linear' }]
        : s.covariates.filter((c) => c.key !== key),
    }));

  return (
    <Card data-testid="spec-editor">
      <CardHeader
        title="Pre-specified analysis"
        description="Outcome, covariates and their functional form, fixed before the comparison of arms is looked at (ICH E9 5.1, 5.7)."
        actions={
          current ? (
            <Badge tone={locked ? 'moss' : 'ochre'}>
              Version {current.version} · {locked ? 'locked' : 'draft'}
            </Badge>
          ) : (
            <Badge>Not saved yet</Badge>
          )
        }
      />
      <CardBody>
        <form
          className="flex flex-col gap-5"
          onSubmit={(e) => {
            e.preventDefault();
            save.mutate({ spec, ...(current ? { reason } : {}) }, { onSuccess: () => setReason('') });
          }}
        >
          {locked && (
            <Callout tone="caution" title={`Version ${current.version} is locked`}>
              Saving a change creates version {current.version + 1}. Runs of a changed specification are
              exploratory and need a reason; the locked version stays as signed.
            </Callout>
          )}
          <fieldset className="grid gap-4 sm:grid-cols-3">
            <legend className="mb-2 text-sm font-semibold text-ink">Primary outcome</legend>
            <TextField
              label="Outcome key"
              value={spec.outcome.key}
              error={issue('spec.outcome.key')}
              onChange={(e) => setSpec({ ...spec, outcome: { ...spec.outcome, key: e.currentTarget.value } })}
              required
              className="figure"
            />
            <TextField
              label="Label"
              value={spec.outcome.label}
              error={issue('spec.outcome.label')}
              onChange={(e) =>
                setSpec({ ...spec, outcome: { ...spec.outcome, label: e.currentTarget.value } })
              }
              required
            />
            <TextField
              label="Unit"
              value={spec.outcome.unit ?? ''}
              error={issue('spec.outcome.unit')}
              onChange={(e) =>
                setSpec({ ...spec, outcome: { ...spec.outcome, unit: e.currentTarget.value || null } })
              }
            />
          </fieldset>

          <SelectField
            label="Baseline value of the outcome (covariate)"
            hint="Adjusting for the outcome measured at baseline is the usual first covariate (EMA 2015)."
            value={spec.baselineCovariateKey ?? ''}
            error={issue('spec.baselineCovariateKey')}
            onChange={(e) => {
              const key = e.currentTarget.value || null;
              setSpec({
                ...spec,
                baselineCovariateKey: key,
                covariates: spec.covariates.filter((c) => c.key !== key),
              });
            }}
            frameClassName="max-w-lg"
          >
            <option value="">None</option>
            {continuous.map((c) => (
              <option key={c.key} value={c.key}>
                {c.label}
                {c.isOutcomeBaseline ? ' (marked as the outcome at baseline)' : ''}
              </option>
            ))}
          </SelectField>

          <fieldset>
            <legend className="text-sm font-semibold text-ink">Further adjustment covariates</legend>
            <p className="mt-0.5 mb-2 text-sm text-graphite">
              Continuous and yes/no covariates enter linearly; categorical ones as indicator columns. Few
              covariates relative to the number of participants (common practice).
            </p>
            <ul className="grid gap-2 sm:grid-cols-2">
              {context.covariates
                .filter((c) => c.key !== spec.baselineCovariateKey)
                .map((c) => (
                  <li key={c.key} className="rounded-control border border-rule bg-paper/60 px-3 py-2">
                    <CheckboxField
                      label={
                        <span className="flex flex-wrap items-center gap-1.5">
                          {c.label}
                          <span className="text-xs text-graphite">
                            {c.kind === 'categorical'
                              ? 'categorical'
                              : c.kind === 'binary'
                                ? 'yes/no, linear'
                                : 'linear'}
                          </span>
                          {c.isStratification && <Badge tone="harbor">stratification factor</Badge>}
                          {c.measuredAfterRandomization > 0 && (
                            <Badge tone="brick">
                              {c.measuredAfterRandomization} measured after randomization
                            </Badge>
                          )}
                          {c.reliability !== null && c.reliability < 1 && (
                            <Badge>reliability {c.reliability.toFixed(2)}</Badge>
                          )}
                        </span>
                      }
                      checked={chosen.has(c.key)}
                      onChange={(e) => toggle(c.key, c.kind, e.currentTarget.checked)}
                    />
                  </li>
                ))}
            </ul>
          </fieldset>

          <CheckboxField
            label={`Include the stratification factors used at randomization${
              context.stratificationFactors.length
                ? ` (${context.stratificationFactors.map((f) => f.label).join(', ')})`
                : ' (none in this design)'
            }`}
            hint="ICH E9 2.3.1: factors used to stratify the randomization are normally adjusted for."
            checked={spec.includeStratificationFactors}
            onChange={(e) => setSpec({ ...spec, includeStratificationFactors: e.currentTarget.checked })}
          />

          <TextField
            label="Significance level (alpha, two-sided)"
            type="number"
            step="any"
            min="0.001"
            max="0.2"
            value={String(spec.alpha)}
            error={issue('spec.alpha')}
            onChange={(e) => setSpec({ ...spec, alpha: Number(e.currentTarget.value) })}
            frameClassName="max-w-60"
            className="figure"
          />

          {warnings.length > 0 && (
            <Callout tone="caution" title="Check before saving" role="status">
              <ul className="list-disc pl-4">
                {warnings.map((w) => (
                  <li key={w}>{w}</li>
                ))}
              </ul>
            </Callout>
          )}

          {current && (
            <TextareaField
              label="Reason for the change"
              hint="Every change after the first save is audited with its reason."
              value={reason}
              error={issue('reason')}
              onChange={(e) => setReason(e.currentTarget.value)}
              required
            />
          )}
          <FormAlert
            message={
              save.isError
                ? other.length
                  ? 'The specification was not saved.'
                  : errorMessage(save.error)
                : null
            }
            extra={other.map((o) => o.message)}
          />
          {save.isSuccess && !save.isPending && (
            <p role="status" className="text-sm font-medium text-moss">
              Saved.
            </p>
          )}
          <div>
            <Button type="submit" variant={current ? 'secondary' : 'primary'} busy={save.isPending}>
              {locked
                ? `Save as version ${current.version + 1}`
                : current
                  ? 'Save the draft'
                  : 'Save the specification'}
            </Button>
          </div>
        </form>
      </CardBody>
    </Card>
  );
}
