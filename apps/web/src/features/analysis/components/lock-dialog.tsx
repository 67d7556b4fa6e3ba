import { useState } from 'react';
import { lockSignatureMeaning, type SpecDto } from '@counterpoise/contracts/analysis';
import { Button } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { CheckboxField, TextField } from '../../../components/ui/field.js';
import { Dialog } from '../../../components/ui/dialog.js';
import { FormAlert } from '../../../components/ui/form-alert.js';
import { isApiError } from '../../../lib/api-client.js';
import { errorMessage } from '../../../lib/form-errors.js';
import { useLockAnalysisSpec } from '../api/lock-analysis-spec.js';

/**
 * The electronic signature that locks a version (21 CFR 11.50, 11.200): the password is entered
 * again as the second component besides the session, and the meaning is confirmed in words.
 */
export function LockDialog({
  studyId,
  spec,
  open,
  onClose,
}: {
  studyId: string;
  spec: SpecDto;
  open: boolean;
  onClose: () => void;
}) {
  const [password, setPassword] = useState('');
  const [confirmed, setConfirmed] = useState(false);
  const lock = useLockAnalysisSpec(studyId);
  const passwordIssue = isApiError(lock.error, 'validation_failed')
    ? lock.error.fieldIssues().find((i) => i.path[0] === 'password')?.message
    : undefined;

  const close = () => {
    setPassword('');
    setConfirmed(false);
    lock.reset();
    onClose();
  };

  return (
    <Dialog open={open} onClose={close} title={`Sign and lock version ${spec.version}`}>
      <form
        className="flex flex-col gap-4"
        onSubmit={(e) => {
          e.preventDefault();
          if (!confirmed) return;
          lock.mutate(
            { version: spec.version, password, meaning: lockSignatureMeaning },
            { onSuccess: close },
          );
        }}
      >
        <dl className="grid grid-cols-[max-content_1fr] gap-x-4 gap-y-1 text-sm">
          <dt className="text-graphite">Outcome</dt>
          <dd className="text-ink">{spec.spec.outcome.label}</dd>
          <dt className="text-graphite">Baseline covariate</dt>
          <dd className="figure text-ink">{spec.spec.baselineCovariateKey ?? 'none'}</dd>
          <dt className="text-graphite">Further covariates</dt>
          <dd className="figure text-ink">
            {spec.spec.covariates.map((c) => `${c.key} (${c.form})`).join(', ') || 'none'}
          </dd>
          <dt className="text-graphite">Stratification factors</dt>
          <dd className="text-ink">{spec.spec.includeStratificationFactors ? 'included' : 'left out'}</dd>
          <dt className="text-graphite">Alpha</dt>
          <dd className="figure text-ink">{spec.spec.alpha}</dd>
        </dl>
        <Callout tone="info">
          Your printed name, the time (UTC) and the meaning below are stored with this version and shown
          wherever it is shown. After locking, any change makes a new version and its runs exploratory.
        </Callout>
        <CheckboxField
          label={<span className="font-semibold">{lockSignatureMeaning}</span>}
          hint="The meaning of this signature."
          checked={confirmed}
          onChange={(e) => setConfirmed(e.currentTarget.checked)}
          required
        />
        <TextField
          label="Your password"
          hint="Entered again to sign, in addition to your session."
          type="password"
          autoComplete="current-password"
          value={password}
          error={passwordIssue}
          onChange={(e) => setPassword(e.currentTarget.value)}
          required
        />
        <FormAlert message={lock.isError && !passwordIssue ? errorMessage(lock.error) : null} />
        <div className="flex justify-end gap-2">
          <Button variant="quiet" onClick={close}>
            Cancel
          </Button>
          <Button type="submit" busy={lock.isPending} disabled={!confirmed || password.length === 0}>
            Sign and lock
          </Button>
        </div>
      </form>
    </Dialog>
  );
}
