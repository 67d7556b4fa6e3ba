import { useMemo, useRef, useState } from 'react';
import { FormProvider, useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { DesignBody } from '@counterpoise/contracts/design';
import type { StudyDetail } from '../../../lib/study-detail.js';
import { Badge } from '../../../components/ui/badge.js';
import { Button } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { TextareaField, TextField } from '../../../components/ui/field.js';
import { FormAlert } from '../../../components/ui/form-alert.js';
import { applyServerFieldErrors, errorMessage } from '../../../lib/form-errors.js';
import { useSaveDesign } from '../api/save-design.js';
import { AllocationFields, StrataPlanPanel } from './allocation-fields.js';
import { ArmsFields, SitesFields } from './arms-sites-fields.js';
import { CovariatesFields, ScreeningQuestionsFields } from './covariate-fields.js';
import { designDraftSchema, draftFromStudy, plainErrors, type DesignDraft } from './design-draft.js';
import { EligibilityFields } from './eligibility-fields.js';
import { messagesUnder } from './form-messages.js';

const topFields = [
  'targetSampleSize',
  'arms',
  'sites',
  'covariates',
  'screeningQuestions',
  'eligibility',
  'allocation',
  'reason',
];

/**
 * The statistician's design page. Saving writes a new design version; once anyone is
 * enrolled the change needs a reason and is audited (issue 4, "Design changes").
 */
export function DesignEditor({ study }: { study: StudyDetail }) {
  const save = useSaveDesign();
  const needsReason = study.enrolled > 0;
  const armsHidden = study.arms === null;
  const [formError, setFormError] = useState<string | null>(null);
  const [formExtra, setFormExtra] = useState<string[]>([]);
  const [saved, setSaved] = useState<string | null>(null);
  const statusRef = useRef<HTMLDivElement>(null);
  const resolver = useMemo(
    () => zodResolver(designDraftSchema(needsReason), { error: plainErrors }),
    [needsReason],
  );
  const form = useForm<DesignDraft, unknown, DesignBody>({
    resolver,
    defaultValues: draftFromStudy(study),
    mode: 'onSubmit',
  });
  const {
    register,
    handleSubmit,
    reset,
    setError,
    formState: { errors, isDirty },
  } = form;

  const onSubmit = handleSubmit(
    async (body) => {
      setFormError(null);
      setFormExtra([]);
      setSaved(null);
      try {
        const next = await save.mutateAsync({ studyId: study.id, body });
        reset(draftFromStudy(next));
        setSaved(`Saved as design version ${next.designVersion}.`);
        statusRef.current?.focus();
      } catch (error) {
        setFormExtra(applyServerFieldErrors(error, setError, topFields));
        setFormError(errorMessage(error));
      }
    },
    (invalid) => {
      setSaved(null);
      const list = messagesUnder(invalid);
      setFormError(`The design was not saved: ${list.length} problem${list.length === 1 ? '' : 's'} to fix.`);
      setFormExtra(list.slice(0, 12));
    },
  );

  return (
    <FormProvider {...form}>
      <form onSubmit={onSubmit} noValidate className="flex flex-col gap-5" aria-label="Study design">
        <Card>
          <CardHeader
            title="Design"
            description="Arms, sites, covariates, eligibility and allocation. Every save is a new version."
            actions={
              <div className="flex flex-wrap gap-1.5">
                <Badge tone="spruce">Version {study.designVersion}</Badge>
                <Badge tone={study.enrolled > 0 ? 'ochre' : 'neutral'}>
                  {study.enrolled.toLocaleString('en')} enrolled
                </Badge>
              </div>
            }
          />
          <CardBody className="grid gap-4 sm:grid-cols-[14rem_1fr]">
            <TextField
              label="Target sample size"
              type="number"
              min={2}
              step={1}
              error={errors.targetSampleSize?.message}
              {...register('targetSampleSize', { valueAsNumber: true })}
            />
            {needsReason && (
              <Callout tone="caution" role="note" title="Participants are already enrolled">
                Changes after the first enrollment are versioned and audited, and need a reason. Allocation
                already given is never changed.
              </Callout>
            )}
          </CardBody>
        </Card>

        <ArmsFields hidden={armsHidden} locked={needsReason} />
        <SitesFields />
        <CovariatesFields enrolled={study.enrolled} savedCount={study.covariates.length} />
        <ScreeningQuestionsFields />
        <EligibilityFields />
        <AllocationFields study={study} locked={needsReason} />
        <StrataPlanPanel study={study} />

        <Card>
          <CardBody className="flex flex-col gap-4">
            {needsReason && (
              <TextareaField
                label="Reason for this change"
                required
                hint="Recorded in the audit trail with the old and new design."
                error={errors.reason?.message}
                {...register('reason')}
              />
            )}
            <FormAlert message={formError} extra={formExtra} />
            <div ref={statusRef} tabIndex={-1} aria-live="polite" className="outline-none">
              {saved && (
                <Callout tone="success" role="status">
                  {saved}
                </Callout>
              )}
            </div>
            {armsHidden && (
              <Callout tone="info">
                Your role cannot see the arms of this blinded study, so it cannot save the design. Ask the
                study’s statistician.
              </Callout>
            )}
            <div className="flex flex-wrap gap-2">
              <Button type="submit" busy={save.isPending} disabled={armsHidden}>
                Save design
              </Button>
              <Button
                variant="secondary"
                disabled={!isDirty || save.isPending}
                onClick={() => {
                  reset(draftFromStudy(study));
                  setFormError(null);
                  setFormExtra([]);
                }}
              >
                Discard changes
              </Button>
            </div>
          </CardBody>
        </Card>
      </form>
    </FormProvider>
  );
}
