import { useId, useState } from 'react';
import type { ConsentDocumentDto } from '@counterpoise/contracts/participants';
import { Button } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { FormAlert } from '../../../components/ui/form-alert.js';
import { errorMessage } from '../../../lib/form-errors.js';
import { formatBytes, type UploadProgress } from '../../../lib/upload.js';
import { consentFileTypes, sniffConsentFile, useUploadConsent } from '../api/upload-consent.js';

/** File picker for a signed consent document: PDF, PNG or JPEG, checked before it is sent. */
export function ConsentFileInput({
  onChange,
  error,
}: {
  onChange: (file: File | null, problem: string | null) => void;
  error?: string | null;
}) {
  const id = useId();
  return (
    <div className="flex flex-col gap-1.5">
      <label htmlFor={id} className="text-sm font-semibold text-ink">
        Signed consent document
      </label>
      <input
        id={id}
        type="file"
        accept={consentFileTypes.join(',')}
        aria-describedby={`${id}-hint${error ? ` ${id}-error` : ''}`}
        aria-invalid={error ? true : undefined}
        className="block w-full rounded-control border border-pebble bg-vellum p-2 text-sm file:mr-3 file:rounded-control file:border-0 file:bg-spruce-wash file:px-3 file:py-1.5 file:font-semibold file:text-spruce-deep"
        onChange={async (e) => {
          const file = e.target.files?.[0] ?? null;
          onChange(file, file ? await sniffConsentFile(file) : null);
        }}
      />
      <p id={`${id}-hint`} className="text-sm text-graphite">
        PDF, PNG or JPEG, up to 10 MB. It is stored outside the web server and fingerprinted (SHA-256) in the
        audit trail.
      </p>
      {error && (
        <p id={`${id}-error`} className="text-sm font-medium text-brick">
          <span aria-hidden="true">✕ </span>
          {error}
        </p>
      )}
    </div>
  );
}

export function UploadMeter({ progress }: { progress: UploadProgress | null }) {
  if (!progress) return null;
  const share = progress.total ? Math.min(1, progress.loaded / progress.total) : null;
  return (
    <div className="flex flex-col gap-1">
      <progress
        className="h-2 w-full accent-spruce"
        value={share === null ? undefined : share}
        max={1}
        aria-label="Upload progress"
      />
      <p className="figure text-xs text-graphite">
        {formatBytes(progress.loaded)}
        {progress.total ? ` of ${formatBytes(progress.total)}` : ''} sent
      </p>
    </div>
  );
}

/** Upload a consent document for an existing participant (detail page, or after enrollment). */
export function ConsentUpload({
  studyId,
  participantId,
  onUploaded,
}: {
  studyId: string;
  participantId: string;
  onUploaded?: (doc: ConsentDocumentDto) => void;
}) {
  const upload = useUploadConsent(studyId);
  const [file, setFile] = useState<File | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const [progress, setProgress] = useState<UploadProgress | null>(null);
  const [formError, setFormError] = useState<string | null>(null);
  const [done, setDone] = useState<ConsentDocumentDto | null>(null);
  const [inputKey, setInputKey] = useState(0);

  const submit = async () => {
    if (!file || problem) return;
    setFormError(null);
    setDone(null);
    try {
      const doc = await upload.mutateAsync({ studyId, participantId, file, onProgress: setProgress });
      setDone(doc);
      setFile(null);
      setInputKey((k) => k + 1);
      onUploaded?.(doc);
    } catch (error) {
      setFormError(errorMessage(error));
    } finally {
      setProgress(null);
    }
  };

  return (
    <div className="flex flex-col gap-3">
      <ConsentFileInput
        key={inputKey}
        error={problem}
        onChange={(f, p) => {
          setFile(f);
          setProblem(p);
          setDone(null);
        }}
      />
      <UploadMeter progress={progress} />
      <FormAlert message={formError} title="The document was not stored" />
      <div aria-live="polite">
        {done && (
          <Callout tone="success" role="status">
            Stored {done.originalName} ({formatBytes(done.sizeBytes)}), SHA-256{' '}
            <span className="figure break-all">{done.sha256.slice(0, 16)}…</span>
          </Callout>
        )}
      </div>
      <div>
        <Button
          variant="secondary"
          onClick={() => void submit()}
          disabled={!file || Boolean(problem)}
          busy={upload.isPending}
        >
          Upload consent document
        </Button>
      </div>
    </div>
  );
}
