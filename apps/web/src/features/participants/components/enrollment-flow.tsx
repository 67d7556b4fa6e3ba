import { useEffect, useMemo, useRef, useState } from 'react';
import { FormProvider, useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { StudyDetail } from '../../../lib/study-detail.js';
import { consentSchema, utcToday, type EnrollResponse } from '@counterpoise/contracts/participants';
import { Button, ButtonLink } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { CheckboxField, SelectField, TextField } from '../../../components/ui/field.js';
import { FormAlert } from '../../../components/ui/form-alert.js';
import { paths } from '../../../config/paths.js';
import { cn } from '../../../lib/cn.js';
import { applyServerFieldErrors, errorMessage } from '../../../lib/form-errors.js';
import { formatBytes, type UploadProgress } from '../../../lib/upload.js';
import { useEnrollParticipant } from '../api/enroll-participant.js';
import { useUploadConsent } from '../api/upload-consent.js';
import {
  BaselineField,
  baselineDraftSchema,
  emptyDraft,
  formatBaselineValue,
  type BaselineDraft,
  type BaselineWire,
} from './baseline-fields.js';
import { ConsentFileInput, UploadMeter } from './consent-upload.js';
import { ScreeningStep, type ScreeningOutcome } from './screening-step.js';

type Step = 'screen' | 'failed' | 'consent' | 'baseline' | 'confirm' | 'done';
const stepOrder: { id: Step; label: string }[] = [
  { id: 'screen', label: 'Screen' },
  { id: 'consent', label: 'Consent' },
  { id: 'baseline', label: 'Baseline' },
  { id: 'confirm', label: 'Enroll' },
  { id: 'done', label: 'Allocation' },
];

type Consent = { date: string; version: string; file: File };

function Steps({ current }: { current: Step }) {
  const index = stepOrder.findIndex((s) => s.id === (current === 'failed' ? 'screen' : current));
  return (
    <ol className="flex flex-wrap gap-2" aria-label="Enrollment steps">
      {stepOrder.map((s, i) => (
        <li
          key={s.id}
          aria-current={i === index ? 'step' : undefined}
          className={cn(
            'flex items-center gap-2 rounded-full border px-3 py-1 text-sm font-semibold',
            i === index
              ? 'border-spruce bg-spruce text-white'
              : i < index
                ? 'border-spruce/30 bg-spruce-wash text-spruce-deep'
                : 'border-rule bg-vellum text-graphite',
          )}
        >
          <span className="figure">{i + 1}</span> {s.label}
          {i < index && <span className="sr-only"> (done)</span>}
        </li>
      ))}
    </ol>
  );
}

function ConsentStep({ onNext, onBack }: { onNext: (c: Consent) => void; onBack: () => void }) {
  const [file, setFile] = useState<File | null>(null);
  const [fileError, setFileError] = useState<string | null>(null);
  const {
    register,
    handleSubmit,
    formState: { errors },
  } = useForm({ resolver: zodResolver(consentSchema), defaultValues: { date: utcToday(), version: '' } });

  const onSubmit = handleSubmit((values) => {
    if (!file) {
      setFileError('Choose the signed consent document');
      return;
    }
    if (fileError) return;
    onNext({ ...values, file });
  });

  return (
    <form onSubmit={onSubmit} noValidate className="flex flex-col gap-5" aria-label="Consent">
      <div className="grid gap-4 sm:grid-cols-2">
        <TextField
          label="Date of consent"
          type="date"
          required
          max={utcToday()}
          hint="On or before the enrollment date (today, UTC)."
          error={errors.date?.message}
          {...register('date')}
        />
        <TextField
          label="Consent form version"
          required
          hint="As printed on the signed form, e.g. v2.1"
          error={errors.version?.message}
          {...register('version')}
        />
      </div>
      <ConsentFileInput
        error={fileError}
        onChange={(f, problem) => {
          setFile(f);
          setFileError(problem);
        }}
      />
      <div className="flex gap-2">
        <Button type="submit">Continue to baseline</Button>
        <Button variant="secondary" onClick={onBack}>
          Back
        </Button>
      </div>
    </form>
  );
}

function BaselineStep({
  study,
  prefill,
  initial,
  onNext,
  onBack,
}: {
  study: StudyDetail;
  prefill: Record<string, unknown>;
  initial: BaselineDraft | null;
  onNext: (draft: BaselineDraft, wire: BaselineWire, exposureArmId: string | undefined) => void;
  onBack: () => void;
}) {
  const today = utcToday();
  // The same generated schema the API runs, with the enrollment date as today (UTC).
  const schema = useMemo(
    () => baselineDraftSchema(study.covariates, { enrollmentDate: today, today }),
    [study.covariates, today],
  );
  const form = useForm<BaselineDraft, unknown, BaselineWire>({
    resolver: zodResolver(schema),
    defaultValues: initial ?? emptyDraft(study.covariates, prefill, today),
  });
  const cohort = study.kind === 'observational_cohort';
  const [exposure, setExposure] = useState('');
  const [exposureError, setExposureError] = useState<string | null>(null);
  const [summary, setSummary] = useState<string | null>(null);

  const onSubmit = form.handleSubmit(
    (wire) => {
      if (cohort && !exposure) {
        setExposureError('Choose the exposure group');
        return;
      }
      onNext(form.getValues(), wire, cohort ? exposure : undefined);
    },
    (errors) =>
      setSummary(
        `${Object.keys(errors).length} value${Object.keys(errors).length === 1 ? ' needs' : 's need'} attention.`,
      ),
  );

  return (
    <FormProvider {...form}>
      <form onSubmit={onSubmit} noValidate className="flex flex-col gap-5" aria-label="Baseline values">
        <p className="text-sm text-graphite">
          Generated from the study’s covariate definitions. Give each value with the date it was measured;
          answers given at screening are filled in with today’s date, so check them.
        </p>
        {study.covariates.map((c) => (
          <BaselineField
            key={c.key}
            covariate={c}
            windowText={
              c.windowDaysAfter > 0
                ? `From ${c.windowDaysBefore} days before to ${c.windowDaysAfter} days after enrollment.`
                : `Within ${c.windowDaysBefore} days before enrollment, not later.`
            }
          />
        ))}
        {cohort && (
          <SelectField
            label="Exposure group"
            required
            value={exposure}
            error={exposureError ?? undefined}
            hint="Observational cohort: the group is recorded, not allocated."
            onChange={(e) => {
              setExposure(e.target.value);
              setExposureError(null);
            }}
          >
            <option value="">Choose…</option>
            {(study.arms ?? []).map((a) => (
              <option key={a.id} value={a.id}>
                {a.name}
              </option>
            ))}
          </SelectField>
        )}
        <FormAlert message={summary && Object.keys(form.formState.errors).length > 0 ? summary : null} />
        <div className="flex gap-2">
          <Button type="submit">Review and enroll</Button>
          <Button variant="secondary" onClick={onBack}>
            Back
          </Button>
        </div>
      </form>
    </FormProvider>
  );
}

type EnrollmentFlowProps = {
  study: StudyDetail;
  sites: { id: string; code: string; name: string }[];
};

/**
 * Screen → consent → baseline → enroll → allocation. The allocation is requested only with
 * the irrevocable registration and shown only after the server committed it (ICH E9 2.3.1).
 */
export function EnrollmentFlow({ study, sites }: EnrollmentFlowProps) {
  const [step, setStep] = useState<Step>('screen');
  const [screened, setScreened] = useState<ScreeningOutcome | null>(null);
  const [consent, setConsent] = useState<Consent | null>(null);
  const [baselineDraft, setBaselineDraft] = useState<BaselineDraft | null>(null);
  const [baseline, setBaseline] = useState<BaselineWire | null>(null);
  const [exposureArmId, setExposureArmId] = useState<string | undefined>(undefined);
  const [confirmed, setConfirmed] = useState(false);
  const [enrollError, setEnrollError] = useState<string | null>(null);
  const [enrollExtra, setEnrollExtra] = useState<string[]>([]);
  const [result, setResult] = useState<EnrollResponse | null>(null);
  const [uploadState, setUploadState] = useState<'idle' | 'sending' | 'stored' | 'failed'>('idle');
  const [uploadError, setUploadError] = useState<string | null>(null);
  const [progress, setProgress] = useState<UploadProgress | null>(null);
  const headingRef = useRef<HTMLHeadingElement>(null);
  const enroll = useEnrollParticipant(study.id);
  const upload = useUploadConsent(study.id);

  // Each step's heading takes focus, so keyboard and screen-reader users start at the new content.
  useEffect(() => headingRef.current?.focus(), [step]);

  const restart = () => {
    setStep('screen');
    setScreened(null);
    setConsent(null);
    setBaselineDraft(null);
    setBaseline(null);
    setExposureArmId(undefined);
    setConfirmed(false);
    setEnrollError(null);
    setResult(null);
    setUploadState('idle');
    setUploadError(null);
  };

  const sendConsent = async (participantId: string, file: File) => {
    setUploadState('sending');
    setUploadError(null);
    try {
      await upload.mutateAsync({ studyId: study.id, participantId, file, onProgress: setProgress });
      setUploadState('stored');
    } catch (error) {
      setUploadState('failed');
      setUploadError(errorMessage(error));
    } finally {
      setProgress(null);
    }
  };

  const doEnroll = async () => {
    if (!screened || !consent || !baseline) return;
    setEnrollError(null);
    setEnrollExtra([]);
    try {
      const res = await enroll.mutateAsync({
        studyId: study.id,
        body: {
          siteId: screened.screening.siteId,
          screeningId: screened.screening.id,
          consent: { date: consent.date, version: consent.version },
          baseline: Object.fromEntries(Object.entries(baseline).filter(([, v]) => v !== undefined)) as Record<
            string,
            { value: number | string | boolean; measuredOn: string } | null
          >,
          ...(exposureArmId ? { exposureArmId } : {}),
        },
      });
      setResult(res);
      setStep('done');
      void sendConsent(res.participant.id, consent.file);
    } catch (error) {
      setEnrollExtra(applyServerFieldErrors(error, () => undefined, []));
      setEnrollError(errorMessage(error));
    }
  };

  const titles: Record<Step, string> = {
    screen: 'Screen a candidate',
    failed: 'Not eligible: screen failure recorded',
    consent: 'Record consent',
    baseline: 'Baseline values',
    confirm: 'Enroll: check and confirm',
    done: 'Enrolled',
  };
  const code = screened?.screening.participant?.code;
  const covariates = new Map(study.covariates.map((c) => [c.key, c]));

  return (
    <div className="flex flex-col gap-5">
      <Steps current={step} />
      <Card>
        <CardHeader
          title={
            <span ref={headingRef} tabIndex={-1} className="outline-none">
              {titles[step]}
            </span>
          }
          description={code && step !== 'screen' ? <span className="figure">{code}</span> : undefined}
        />
        <CardBody>
          {step === 'screen' && (
            <ScreeningStep
              study={study}
              sites={sites}
              onScreened={(outcome) => {
                setScreened(outcome);
                setStep(outcome.screening.eligible ? 'consent' : 'failed');
              }}
            />
          )}

          {step === 'failed' && screened && (
            <div className="flex flex-col gap-4">
              <Callout
                tone="danger"
                role="alert"
                title="This candidate does not meet the eligibility criteria"
              >
                <p>The screening is recorded in the screening log. The candidate cannot be enrolled.</p>
                <ul className="mt-2 list-disc pl-5" aria-label="Criteria not met">
                  {screened.screening.failedCriteria.map((c) => (
                    <li key={c.id}>
                      <span className="font-semibold">
                        {c.kind === 'inclusion' ? 'Inclusion not met' : 'Exclusion applies'}: {c.label}
                      </span>{' '}
                      <span className="text-sm">({c.reason})</span>
                    </li>
                  ))}
                </ul>
              </Callout>
              <div>
                <Button onClick={restart}>Screen another candidate</Button>
              </div>
            </div>
          )}

          {step === 'consent' && (
            <div className="flex flex-col gap-4">
              <Callout tone="success" role="status">
                Eligible: every criterion is met. Record consent before any baseline value.
              </Callout>
              <ConsentStep
                onBack={restart}
                onNext={(c) => {
                  setConsent(c);
                  setStep('baseline');
                }}
              />
            </div>
          )}

          {step === 'baseline' && screened && (
            <BaselineStep
              study={study}
              prefill={screened.answers}
              initial={baselineDraft}
              onBack={() => setStep('consent')}
              onNext={(draft, wire, exposure) => {
                setBaselineDraft(draft);
                setBaseline(wire);
                setExposureArmId(exposure);
                setConfirmed(false);
                setStep('confirm');
              }}
            />
          )}

          {step === 'confirm' && screened && consent && baseline && (
            <div className="flex flex-col gap-5">
              <dl className="grid gap-3 text-sm sm:grid-cols-3">
                <div>
                  <dt className="text-xs font-semibold text-graphite uppercase">Site</dt>
                  <dd className="figure">{screened.screening.siteCode}</dd>
                </div>
                <div>
                  <dt className="text-xs font-semibold text-graphite uppercase">Consent</dt>
                  <dd>
                    <span className="figure">{consent.date}</span>, version {consent.version}
                  </dd>
                </div>
                <div>
                  <dt className="text-xs font-semibold text-graphite uppercase">Document</dt>
                  <dd className="break-all">
                    {consent.file.name} ({formatBytes(consent.file.size)})
                  </dd>
                </div>
              </dl>
              <ul className="grid gap-1 text-sm sm:grid-cols-2">
                {Object.entries(baseline).map(([key, entry]) =>
                  entry ? (
                    <li key={key}>
                      <span className="font-semibold">{covariates.get(key)?.label ?? key}:</span>{' '}
                      <span className="figure">{formatBaselineValue(covariates.get(key), entry.value)}</span>{' '}
                      <span className="text-graphite">(measured {entry.measuredOn})</span>
                    </li>
                  ) : null,
                )}
              </ul>
              <Callout tone="caution" title="Enrollment is irrevocable">
                Once enrolled, the participant is registered for good and
                {study.kind === 'randomized_trial'
                  ? ' the allocation is fixed'
                  : ' the exposure group is recorded'}
                . Values can later be corrected only with a reason, and withdrawal keeps what was collected.
              </Callout>
              <CheckboxField
                label="I confirm consent was given and the values above are correct; I understand registration cannot be undone."
                checked={confirmed}
                onChange={(e) => setConfirmed(e.target.checked)}
              />
              <FormAlert message={enrollError} title="Not enrolled: nothing was saved" extra={enrollExtra} />
              <div className="flex gap-2">
                <Button onClick={() => void doEnroll()} disabled={!confirmed} busy={enroll.isPending}>
                  Enroll
                </Button>
                <Button variant="secondary" onClick={() => setStep('baseline')} disabled={enroll.isPending}>
                  Back
                </Button>
              </div>
            </div>
          )}

          {step === 'done' && result && (
            <div className="flex flex-col gap-5">
              <div role="status" aria-live="polite" className="flex flex-col gap-3">
                <p>
                  <span className="figure font-semibold">{result.participant.code}</span> is enrolled at{' '}
                  <span className="figure">{result.participant.siteCode}</span>.
                </p>
                {result.allocation ? (
                  <div
                    className="rounded-card border-2 border-spruce bg-spruce-wash p-4"
                    data-testid="allocation"
                  >
                    <p className="text-xs font-semibold tracking-wide text-spruce-deep uppercase">Kit code</p>
                    <p className="figure text-3xl font-medium text-ink">{result.allocation.kitCode}</p>
                    {result.allocation.arm ? (
                      <p className="mt-2">
                        Arm: <span className="font-semibold">{result.allocation.arm.name}</span>{' '}
                        <span className="figure text-graphite">({result.allocation.arm.code})</span>
                      </p>
                    ) : (
                      <p className="mt-2 text-sm text-graphite">
                        Blinded study: dispense the pack with this kit code. The arm is not shown.
                      </p>
                    )}
                  </div>
                ) : (
                  <p className="text-sm text-graphite">
                    {result.participant.arm
                      ? `Exposure group recorded: ${result.participant.arm.name}.`
                      : 'No allocation: the exposure group is recorded.'}
                  </p>
                )}
              </div>
              <div className="flex flex-col gap-2">
                <p className="text-sm font-semibold text-ink">Consent document</p>
                <UploadMeter progress={progress} />
                <div aria-live="polite">
                  {uploadState === 'sending' && (
                    <p className="text-sm text-graphite">Storing the consent document…</p>
                  )}
                  {uploadState === 'stored' && (
                    <Callout tone="success" role="status">
                      The signed consent document is stored with the participant.
                    </Callout>
                  )}
                </div>
                {uploadState === 'failed' && (
                  <>
                    <FormAlert message={uploadError} title="The consent document was not stored" />
                    <div>
                      <Button
                        variant="secondary"
                        onClick={() => consent && void sendConsent(result.participant.id, consent.file)}
                      >
                        Try the upload again
                      </Button>
                    </div>
                  </>
                )}
              </div>
              <div className="flex flex-wrap gap-2">
                <ButtonLink
                  to={paths.participants.detail.href(study.id, result.participant.id)}
                  variant="secondary"
                >
                  Open the participant
                </ButtonLink>
                <Button onClick={restart}>Screen the next candidate</Button>
              </div>
            </div>
          )}
        </CardBody>
      </Card>
    </div>
  );
}
