import { useId, useRef, useState } from 'react';
import type { StudyDetail } from '../../../lib/study-detail.js';
import type { ImportReport } from '@counterpoise/contracts/participants';
import { Button } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { FormAlert } from '../../../components/ui/form-alert.js';
import { Table, TBody, TD, TH, THead, TR } from '../../../components/ui/table.js';
import { errorMessage } from '../../../lib/form-errors.js';
import { CsvFileField, FileColumnsTable } from '../../../components/ui/csv-file-field.js';
import { formatBytes, type UploadProgress } from '../../../lib/upload.js';
import { useImportProgress } from '../api/get-import-progress.js';
import { newProgressId, useImportParticipants, type ImportMode } from '../api/import-participants.js';

/** The columns the importer reads, in the order a template lists them. */
export function importColumns(study: StudyDetail): { name: string; meaning: string }[] {
  const cols = [
    {
      name: 'participant_ref',
      meaning: 'Your own reference for the row; re-uploading the same reference adds nothing (required)',
    },
    { name: 'site', meaning: `Site code: ${study.sites.map((s) => s.code).join(', ')} (required)` },
    { name: 'status', meaning: "'enrolled' (default) or 'screened'" },
    { name: 'enrollment_date', meaning: 'YYYY-MM-DD, for enrolled rows' },
    { name: 'consent_date', meaning: 'YYYY-MM-DD, on or before the enrollment date' },
    { name: 'consent_version', meaning: 'The consent form version' },
  ];
  if (study.kind === 'observational_cohort') {
    cols.push({
      name: 'exposure',
      meaning: `Exposure group code: ${(study.arms ?? []).map((a) => a.code).join(', ')}`,
    });
  }
  for (const c of study.covariates) {
    const what =
      c.kind === 'continuous'
        ? `number ${c.min ?? ''}–${c.max ?? ''}${c.unit ? ` ${c.unit}` : ''}`
        : c.kind === 'binary'
          ? 'yes or no'
          : `one of ${(c.levels ?? []).join(', ')}`;
    cols.push({ name: c.key, meaning: `${c.label}: ${what}${c.required ? ' (required)' : ''}` });
    cols.push({ name: `${c.key}_date`, meaning: `Measurement date of ${c.label}, YYYY-MM-DD` });
  }
  for (const q of study.screeningQuestions) {
    const what =
      q.kind === 'number'
        ? 'a number'
        : q.kind === 'binary'
          ? 'yes or no'
          : `one of ${(q.levels ?? []).join(', ')}`;
    cols.push({ name: q.key, meaning: `Screening question "${q.label}": ${what}` });
  }
  return cols;
}

function templateHref(study: StudyDetail): string {
  const header = importColumns(study)
    .map((c) => c.name)
    .join(',');
  return `data:text/csv;charset=utf-8,${encodeURIComponent(`${header}\n`)}`;
}

const phaseLabel = {
  receiving: 'Receiving the file',
  validating: 'Checking rows',
  writing: 'Writing participants',
  done: 'Finished',
  failed: 'Stopped',
} as const;

function Progress({
  upload,
  studyId,
  progressId,
  busy,
}: {
  upload: UploadProgress | null;
  studyId: string;
  progressId: string | null;
  busy: boolean;
}) {
  const server = useImportProgress(studyId, progressId, busy);
  if (!busy) return null;
  const sent = upload?.total ? Math.min(1, upload.loaded / upload.total) : null;
  const uploading = sent === null || sent < 1;
  const p = server.data;
  const rowsShare = p?.totalRows ? Math.min(1, p.rowsProcessed / p.totalRows) : undefined;
  return (
    <div
      className="flex flex-col gap-2 rounded-card border border-rule bg-paper/50 p-4"
      role="status"
      aria-live="polite"
    >
      {uploading ? (
        <>
          <p className="text-sm font-semibold text-ink">Uploading…</p>
          <progress
            className="h-2 w-full accent-spruce"
            value={sent ?? undefined}
            max={1}
            aria-label="Upload progress"
          />
          <p className="figure text-xs text-graphite">
            {upload
              ? `${formatBytes(upload.loaded)}${upload.total ? ` of ${formatBytes(upload.total)}` : ''}`
              : 'Starting'}
          </p>
        </>
      ) : (
        <>
          <p className="text-sm font-semibold text-ink">
            {p ? phaseLabel[p.phase] : 'Processing on the server'}…
          </p>
          <progress
            className="h-2 w-full accent-spruce"
            value={rowsShare}
            max={1}
            aria-label="Processing progress"
          />
          {p && (
            <p className="figure text-xs text-graphite">
              {p.rowsProcessed.toLocaleString('en')}
              {p.totalRows ? ` of ${p.totalRows.toLocaleString('en')}` : ''} rows
            </p>
          )}
        </>
      )}
    </div>
  );
}

function ReportView({ report }: { report: ImportReport }) {
  const badRows = new Set(report.errors.map((e) => e.row)).size;
  return (
    <div className="flex flex-col gap-4">
      <dl className="grid gap-3 text-sm sm:grid-cols-4">
        <div>
          <dt className="text-xs font-semibold text-graphite uppercase">Rows</dt>
          <dd className="figure text-lg">{report.rowCount.toLocaleString('en')}</dd>
        </div>
        <div>
          <dt className="text-xs font-semibold text-graphite uppercase">Valid rows</dt>
          <dd className="figure text-lg">{report.validRows.toLocaleString('en')}</dd>
        </div>
        <div>
          <dt className="text-xs font-semibold text-graphite uppercase">Rows with problems</dt>
          <dd className="figure text-lg">{badRows.toLocaleString('en')}</dd>
        </div>
        <div>
          <dt className="text-xs font-semibold text-graphite uppercase">Separator</dt>
          <dd className="figure text-lg">{report.delimiter === '\t' ? 'tab' : report.delimiter}</dd>
        </div>
      </dl>
      {report.errors.length > 0 && (
        <>
          <Callout tone="danger" role="alert" title="Nothing will be imported from this file">
            {badRows} row{badRows === 1 ? ' has' : 's have'} problems. The whole file goes in at once or not
            at all: fix these rows and upload the file again.
            {report.errorsTruncated && ' Only the first problems are listed.'}
          </Callout>
          <p className="text-sm text-graphite">Row numbers are lines of the file; the header is row 1.</p>
          <Table aria-label="Problems by row and field">
            <THead>
              <TR>
                <TH>Row</TH>
                <TH>Column</TH>
                <TH>Problem</TH>
              </TR>
            </THead>
            <TBody>
              {report.errors.map((e, i) => (
                <TR key={`${e.row}-${e.field}-${i}`}>
                  <TD className="figure">{e.row}</TD>
                  <TD>
                    <code className="text-xs">{e.field}</code>
                  </TD>
                  <TD>{e.message}</TD>
                </TR>
              ))}
            </TBody>
          </Table>
        </>
      )}
    </div>
  );
}

/** Upload → preview (per row, per field, nothing written) → commit (all rows or none). */
export function ImportPanel({ study }: { study: StudyDetail }) {
  const inputId = useId();
  const inputRef = useRef<HTMLInputElement>(null);
  const run = useImportParticipants(study.id);
  const [file, setFile] = useState<File | null>(null);
  const [preview, setPreview] = useState<ImportReport | null>(null);
  const [committed, setCommitted] = useState<ImportReport | null>(null);
  const [upload, setUpload] = useState<UploadProgress | null>(null);
  const [progressId, setProgressId] = useState<string | null>(null);
  const [formError, setFormError] = useState<string | null>(null);

  const send = async (mode: ImportMode) => {
    if (!file) return;
    const id = newProgressId();
    setProgressId(id);
    setUpload(null);
    setFormError(null);
    try {
      const report = await run.mutateAsync({
        studyId: study.id,
        file,
        mode,
        progressId: id,
        onUpload: setUpload,
      });
      if (mode === 'preview') {
        setPreview(report);
        setCommitted(null);
      } else {
        setCommitted(report);
        if (report.errors.length) setPreview(report);
      }
    } catch (error) {
      setFormError(errorMessage(error));
    } finally {
      setProgressId(null);
    }
  };

  const columns = importColumns(study);
  const ready = preview && preview.errors.length === 0 && !committed;
  const nothingNew =
    preview &&
    preview.errors.length === 0 &&
    (preview.alreadyImported || preview.validRows === preview.skippedExisting);

  return (
    <div className="flex flex-col gap-5">
      <Card>
        <CardHeader
          title="Import participants from a CSV file"
          description="First a preview checks every row and writes nothing. Then the import puts the whole file in at once, or nothing."
        />
        <CardBody className="flex flex-col gap-4">
          <CsvFileField
            id={inputId}
            file={file}
            inputRef={inputRef}
            onChoose={(f) => {
              setFile(f);
              setPreview(null);
              setCommitted(null);
              setFormError(null);
            }}
            hint="UTF-8 text, separated by commas, semicolons or tabs, with a header row. Up to 64 MB."
          />
          <Progress upload={upload} studyId={study.id} progressId={progressId} busy={run.isPending} />
          <FormAlert message={formError} title="The file could not be read" />
          <div className="flex flex-wrap gap-2">
            <Button
              onClick={() => void send('preview')}
              disabled={!file || run.isPending}
              busy={run.isPending && !ready}
            >
              Check the file
            </Button>
            {ready && !nothingNew && (
              <Button onClick={() => void send('commit')} busy={run.isPending}>
                Import {(preview.validRows - preview.skippedExisting).toLocaleString('en')} participant
                {preview.validRows - preview.skippedExisting === 1 ? '' : 's'}
              </Button>
            )}
          </div>
        </CardBody>
      </Card>

      {(preview || committed) && (
        <Card>
          <CardHeader title={committed && committed.errors.length === 0 ? 'Import result' : 'Preview'} />
          <CardBody className="flex flex-col gap-4" aria-live="polite">
            {committed && committed.errors.length === 0 ? (
              committed.alreadyImported || committed.imported === 0 ? (
                <Callout tone="info" role="status" title="Nothing new was added">
                  This file, or every row in it, was already imported
                  {committed.skippedExisting
                    ? ` (${committed.skippedExisting.toLocaleString('en')} rows already present)`
                    : ''}
                  . No participant was duplicated.
                </Callout>
              ) : (
                <Callout
                  tone="success"
                  role="status"
                  title={`${committed.imported.toLocaleString('en')} participants imported`}
                >
                  {committed.skippedExisting > 0 &&
                    `${committed.skippedExisting.toLocaleString('en')} rows were already present and were left as they were. `}
                  Each import is recorded in the audit trail with the file’s SHA-256.
                </Callout>
              )
            ) : preview ? (
              <>
                {nothingNew ? (
                  <Callout tone="info" role="status" title="Nothing new to add">
                    Every row of this file is already imported; importing it again would add nothing.
                  </Callout>
                ) : (
                  preview.errors.length === 0 && (
                    <Callout tone="success" role="status" title="Every row is valid">
                      Nothing is written yet. Press “Import” to add them in one step.
                      {preview.skippedExisting > 0 &&
                        ` ${preview.skippedExisting.toLocaleString('en')} rows are already present and will be left alone.`}
                    </Callout>
                  )
                )}
                <ReportView report={preview} />
              </>
            ) : null}
            <p className="figure text-xs break-all text-graphite">
              File SHA-256 {(committed ?? preview)?.fileSha256}
            </p>
          </CardBody>
        </Card>
      )}

      <Card>
        <CardHeader
          title="Columns"
          description="Column names are not case-sensitive; unknown columns are refused."
          actions={
            <a
              href={templateHref(study)}
              download={`${study.code}-import-template.csv`}
              className="text-sm font-semibold text-spruce underline underline-offset-4"
            >
              Download a header template
            </a>
          }
        />
        <CardBody>
          <FileColumnsTable label="Import columns" columns={columns} />
        </CardBody>
      </Card>
    </div>
  );
}
