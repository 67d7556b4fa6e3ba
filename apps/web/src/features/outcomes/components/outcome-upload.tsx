import { useId, useRef, useState } from 'react';
import { useQueryClient } from '@tanstack/react-query';
import { reasonSchema } from '@counterpoise/contracts/common';
import { utcToday } from '@counterpoise/contracts/participants';
import { Button } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { TextareaField } from '../../../components/ui/field.js';
import { CsvFileField } from '../../../components/ui/csv-file-field.js';
import { checkOutcomes } from '../api/check-outcomes.js';
import { invalidateOutcomeViews, recordOutcomes } from '../api/record-outcomes.js';
import { needsReason, rowIssues, sendChunks, totals } from './chunked-send.js';
import {
  chunkRows,
  decodeOutcomeFile,
  MAX_LISTED_PROBLEMS,
  parseOutcomeFile,
  serverIssuesToProblems,
  type OutcomeFileRow,
  type ParsedOutcomeFile,
} from './outcome-csv.js';
import {
  CheckResult,
  ChunkProgress,
  FileSummary,
  n,
  plural,
  ProblemsTable,
  RowsPreview,
  WriteResult,
  type Busy,
  type Checked,
  type Written,
} from './upload-reports.js';

/**
 * A CSV of outcomes: read and checked in the browser, then checked by the server without writing,
 * then recorded in parts of at most 5,000 rows. Each part goes in whole or not at all; if one is
 * refused the page says which parts are in and which are not.
 */
export function OutcomeUpload({
  studyId,
  outcomeKey,
  unit,
}: {
  studyId: string;
  outcomeKey: string;
  unit: string | null;
}) {
  const inputId = useId();
  const queryClient = useQueryClient();
  const resultRef = useRef<HTMLHeadingElement>(null);
  const reasonRef = useRef<HTMLTextAreaElement>(null);
  const [file, setFile] = useState<File | null>(null);
  const [parsed, setParsed] = useState<ParsedOutcomeFile | null>(null);
  const [readError, setReadError] = useState<string | null>(null);
  const [checked, setChecked] = useState<Checked | null>(null);
  const [written, setWritten] = useState<Written | null>(null);
  const [busy, setBusy] = useState<Busy>(null);
  const [reason, setReason] = useState('');
  const [reasonError, setReasonError] = useState<string | null>(null);

  const chunks = parsed && parsed.rows.length ? chunkRows(parsed.rows) : [];
  const focusResult = () => setTimeout(() => resultRef.current?.focus(), 0);

  const reset = () => {
    setParsed(null);
    setReadError(null);
    setChecked(null);
    setWritten(null);
    setReason('');
    setReasonError(null);
  };

  const choose = async (chosen: File | null) => {
    reset();
    setFile(chosen);
    if (!chosen) return;
    const decoded = decodeOutcomeFile(new Uint8Array(await chosen.arrayBuffer()));
    if ('error' in decoded) {
      setReadError(decoded.error);
      return;
    }
    setParsed(parseOutcomeFile(decoded.text, { today: utcToday() }));
  };

  const check = async () => {
    setChecked(null);
    setWritten(null);
    setBusy({ what: 'checking', settled: 0, total: chunks.length });
    const run = await sendChunks(chunks, (rows) => checkOutcomes(studyId, { outcomeKey, rows: wire(rows) }), {
      stopOnFailure: false,
      onProgress: (settled, total) => setBusy({ what: 'checking', settled, total }),
    });
    setBusy(null);
    const problems = run.failed.flatMap((f) => serverIssuesToProblems(rowIssues(f.error), chunks[f.index]!));
    setChecked({ counts: totals(run.done), problems, failures: run.failed });
    focusResult();
  };

  const write = async (startAt: number) => {
    const needed = (checked?.counts.corrected ?? 0) > 0 || written?.stopped?.reasonNeeded;
    const given = reasonSchema.safeParse(reason);
    if (needed && !given.success) {
      setReasonError(given.error.issues[0]?.message ?? 'Give a reason');
      reasonRef.current?.focus();
      return;
    }
    setReasonError(null);
    const before = written?.done ?? [];
    setBusy({ what: 'recording', settled: startAt, total: chunks.length });
    const run = await sendChunks(
      chunks,
      (rows) =>
        recordOutcomes(studyId, {
          outcomeKey,
          rows: wire(rows),
          ...(given.success ? { reason: given.data } : {}),
        }),
      {
        stopOnFailure: true,
        startAt,
        onProgress: (settled, total) => setBusy({ what: 'recording', settled, total }),
      },
    );
    setBusy(null);
    const failed = run.failed[0];
    setWritten({
      done: [...before, ...run.done],
      stopped: failed
        ? {
            failed,
            notSent: run.notSent,
            reasonNeeded: needsReason(failed.error),
            problems: serverIssuesToProblems(rowIssues(failed.error), chunks[failed.index]!),
          }
        : null,
    });
    if (run.done.length) invalidateOutcomeViews(queryClient, studyId);
    focusResult();
  };

  const localOk = parsed && !parsed.fileProblem && parsed.badRows === 0 && parsed.rows.length > 0;
  const serverOk = checked && checked.failures.length === 0;
  const toRecord = checked ? checked.counts.created + checked.counts.corrected : 0;
  const finished = written && !written.stopped;

  return (
    <Card>
      <CardHeader
        title="Upload a CSV file"
        description="For many participants at once. The file is read and checked in your browser, then by the server, before anything is recorded."
      />
      <CardBody className="flex flex-col gap-4">
        <CsvFileField
          id={inputId}
          file={file}
          disabled={busy !== null}
          reselectable
          onChoose={(f) => void choose(f)}
          hint={
            <>
              Columns <code className="text-xs">participant_code</code>, <code className="text-xs">value</code>{' '}
              and <code className="text-xs">measured_on</code>, separated by commas or semicolons, saved as UTF-8.
            </>
          }
        />

        <div aria-live="polite" className="flex flex-col gap-4 empty:-mt-4">
          {readError && (
            <Callout tone="danger" role="alert" title="The file could not be read">
              {readError}
            </Callout>
          )}
          {parsed && <FileSummary parsed={parsed} />}
        </div>

        {parsed?.fileProblem && (
          <Callout tone="danger" role="alert" title="Nothing will be sent from this file">
            {parsed.fileProblem}
          </Callout>
        )}
        {parsed && parsed.problemCount > 0 && (
          <>
            <Callout tone="danger" role="alert" title="Nothing will be sent from this file">
              {plural(parsed.badRows, 'row has', 'rows have')} problems. Fix them and choose the file again;
              every row must be right before any is sent.
              {parsed.problemCount > MAX_LISTED_PROBLEMS &&
                ` Only the first ${n(MAX_LISTED_PROBLEMS)} problems are listed.`}
            </Callout>
            <ProblemsTable problems={parsed.problems} label="Problems found in the file" />
          </>
        )}
        {localOk && !checked && !written && <RowsPreview rows={parsed.rows} unit={unit} />}

        {busy && <ChunkProgress busy={busy} rows={parsed?.rows.length ?? 0} />}

        {localOk && !checked && !busy && (
          <div>
            <Button onClick={() => void check()}>
              Check {plural(parsed.rows.length, 'row')} with the server
            </Button>
          </div>
        )}

        {checked && (
          <div className="flex flex-col gap-4">
            <h3 ref={resultRef} tabIndex={-1} className="text-base font-semibold text-ink outline-none">
              {written ? 'Result' : 'Server check'}
            </h3>
            {!written && <CheckResult checked={checked} chunks={chunks} />}
            {written && <WriteResult written={written} chunks={chunks} />}

            {((serverOk && !written && checked.counts.corrected > 0) || written?.stopped?.reasonNeeded) && (
              <TextareaField
                ref={reasonRef}
                label="Reason for the corrections"
                required
                hint={
                  written?.stopped?.reasonNeeded
                    ? 'Values were recorded for some of these participants since the check. Their old and new values are kept in the audit trail with this reason.'
                    : `${plural(checked.counts.corrected, 'row changes a value', 'rows change values')} already recorded. Each old and new value is kept in the audit trail with this reason.`
                }
                error={reasonError ?? undefined}
                value={reason}
                onChange={(e) => {
                  setReason(e.target.value);
                  setReasonError(null);
                }}
              />
            )}

            {!busy && serverOk && !written && toRecord > 0 && (
              <div>
                <Button onClick={() => void write(0)}>
                  Record {plural(toRecord, 'outcome')}
                  {chunks.length > 1 ? ` in ${n(chunks.length)} parts` : ''}
                </Button>
              </div>
            )}
            {!busy && written?.stopped && written.stopped.problems.length === 0 && (
              <div className="flex flex-wrap gap-2">
                <Button onClick={() => void write(written.stopped!.failed.index)}>
                  {written.stopped.reasonNeeded ? 'Record with this reason' : 'Try again'}
                  {chunks.length > 1 ? ` from part ${n(written.stopped.failed.index + 1)}` : ''}
                </Button>
              </div>
            )}
            {finished && (
              <div>
                <Button
                  variant="secondary"
                  onClick={() => {
                    reset();
                    setFile(null);
                    document.getElementById(inputId)?.focus();
                  }}
                >
                  Upload another file
                </Button>
              </div>
            )}
          </div>
        )}
      </CardBody>
    </Card>
  );
}

const wire = (rows: OutcomeFileRow[]) =>
  rows.map((r) => ({ participantCode: r.participantCode, value: r.value, measuredOn: r.measuredOn }));
