import { useId, useRef, useState } from 'react';
import { useQueryClient } from '@tanstack/react-query';
import { reasonSchema } from '@counterpoise/contracts/common';
import { utcToday } from '@counterpoise/contracts/participants';
import { Button } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { TextareaField } from '../../../components/ui/field.js';
import { Table, TBody, TD, TH, THead, TR } from '../../../components/ui/table.js';
import { errorMessage } from '../../../lib/form-errors.js';
import { formatBytes } from '../../../lib/upload.js';
import { checkOutcomes } from '../api/check-outcomes.js';
import { invalidateOutcomeViews, recordOutcomes } from '../api/record-outcomes.js';
import {
  linesText,
  needsReason,
  rowIssues,
  sendChunks,
  totals,
  type ChunkDone,
  type ChunkFailed,
  type Counts,
} from './chunked-send.js';
import {
  chunkRows,
  decodeOutcomeFile,
  MAX_LISTED_PROBLEMS,
  MAX_ROWS_PER_REQUEST,
  parseOutcomeFile,
  serverIssuesToProblems,
  type FileProblem,
  type OutcomeFileRow,
  type ParsedOutcomeFile,
} from './outcome-csv.js';

type Busy = { what: 'checking' | 'recording'; settled: number; total: number } | null;

type Checked = { counts: Counts; problems: FileProblem[]; failures: ChunkFailed[] };

/** Where a write stands: what went in, and where it stopped if it did. */
type Written = {
  done: ChunkDone[];
  stopped: { failed: ChunkFailed; notSent: number[]; reasonNeeded: boolean; problems: FileProblem[] } | null;
};

const n = (x: number) => x.toLocaleString('en');
const plural = (x: number, one: string, many = `${one}s`) => `${n(x)} ${x === 1 ? one : many}`;

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
        <div className="flex flex-col gap-1.5">
          <label htmlFor={inputId} className="text-sm font-semibold text-ink">
            CSV file
          </label>
          <input
            id={inputId}
            type="file"
            accept=".csv,text/csv"
            aria-describedby={`${inputId}-hint`}
            disabled={busy !== null}
            className="block w-full rounded-control border border-pebble bg-vellum p-2 text-sm file:mr-3 file:rounded-control file:border-0 file:bg-spruce-wash file:px-3 file:py-1.5 file:font-semibold file:text-spruce-deep"
            // Cleared as the picker opens, so that choosing the same file again after fixing it reads it again.
            onClick={(e) => {
              e.currentTarget.value = '';
            }}
            onChange={(e) => void choose(e.target.files?.[0] ?? null)}
          />
          <p id={`${inputId}-hint`} className="text-sm text-graphite">
            Columns <code className="text-xs">participant_code</code>, <code className="text-xs">value</code>{' '}
            and <code className="text-xs">measured_on</code>, separated by commas or semicolons, saved as
            UTF-8.
            {file && (
              <>
                {' '}
                Chosen: <span className="font-semibold">{file.name}</span> ({formatBytes(file.size)}).
              </>
            )}
          </p>
        </div>

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

function FileSummary({ parsed }: { parsed: ParsedOutcomeFile }) {
  return (
    <dl className="grid gap-3 text-sm sm:grid-cols-4" data-testid="outcome-file-summary">
      <div>
        <dt className="text-xs font-semibold text-graphite uppercase">Rows</dt>
        <dd className="figure text-lg">{n(parsed.rowCount)}</dd>
      </div>
      <div>
        <dt className="text-xs font-semibold text-graphite uppercase">Valid rows</dt>
        <dd className="figure text-lg">{n(parsed.fileProblem ? 0 : parsed.rowCount - parsed.badRows)}</dd>
      </div>
      <div>
        <dt className="text-xs font-semibold text-graphite uppercase">Rows with problems</dt>
        <dd className="figure text-lg">{n(parsed.badRows)}</dd>
      </div>
      <div>
        <dt className="text-xs font-semibold text-graphite uppercase">Separator</dt>
        <dd className="text-lg">{parsed.delimiter === ';' ? 'Semicolon' : 'Comma'}</dd>
      </div>
    </dl>
  );
}

function RowsPreview({ rows, unit }: { rows: OutcomeFileRow[]; unit: string | null }) {
  const shown = rows.slice(0, 5);
  return (
    <Table aria-label={`The first ${shown.length} of ${rows.length} rows`}>
      <caption className="px-4 pt-3 text-left text-sm text-graphite">
        {rows.length > shown.length
          ? `The first ${shown.length} of ${n(rows.length)} rows, as read.`
          : 'The rows, as read.'}
      </caption>
      <THead>
        <TR>
          <TH>Line</TH>
          <TH>Participant</TH>
          <TH className="text-right">Value{unit ? ` (${unit})` : ''}</TH>
          <TH>Measured on</TH>
        </TR>
      </THead>
      <TBody>
        {shown.map((r) => (
          <TR key={r.line}>
            <TD className="figure">{r.line}</TD>
            <TD className="figure">{r.participantCode}</TD>
            <TD className="figure text-right">
              {r.value.toLocaleString('en', { maximumFractionDigits: 6 })}
            </TD>
            <TD className="figure">{r.measuredOn}</TD>
          </TR>
        ))}
      </TBody>
    </Table>
  );
}

function ProblemsTable({ problems, label }: { problems: FileProblem[]; label: string }) {
  return (
    <>
      <p className="text-sm text-graphite">Line numbers are lines of the file; the header is line 1.</p>
      <Table aria-label={label} data-testid="outcome-problems">
        <THead>
          <TR>
            <TH>Line</TH>
            <TH>Column</TH>
            <TH>Problem</TH>
          </TR>
        </THead>
        <TBody>
          {problems.map((p, i) => (
            <TR key={`${p.line}-${p.column}-${i}`}>
              <TD className="figure">{p.line || '–'}</TD>
              <TD>
                <code className="text-xs">{p.column}</code>
              </TD>
              <TD>{p.message}</TD>
            </TR>
          ))}
        </TBody>
      </Table>
    </>
  );
}

function ChunkProgress({ busy, rows }: { busy: NonNullable<Busy>; rows: number }) {
  const part = Math.min(busy.settled + 1, busy.total);
  return (
    <div
      className="flex flex-col gap-2 rounded-card border border-rule bg-paper/50 p-4"
      role="status"
      aria-live="polite"
    >
      <p className="text-sm font-semibold text-ink">
        {busy.what === 'checking' ? 'Checking' : 'Recording'} part {n(part)} of {n(busy.total)}…
      </p>
      <progress
        className="h-2 w-full accent-spruce"
        value={busy.settled}
        max={Math.max(busy.total, 1)}
        aria-label={busy.what === 'checking' ? 'Check progress' : 'Recording progress'}
      />
      <p className="figure text-xs text-graphite">
        {n(Math.min(busy.settled * MAX_ROWS_PER_REQUEST, rows))} of {n(rows)} rows
      </p>
    </div>
  );
}

function CountsList({ counts, tense }: { counts: Counts; tense: 'would' | 'did' }) {
  const items = [
    { label: tense === 'would' ? 'New' : 'Recorded', value: counts.created },
    { label: tense === 'would' ? 'Corrections' : 'Corrected', value: counts.corrected },
    { label: 'Unchanged', value: counts.unchanged },
  ];
  return (
    <dl
      className="grid gap-3 text-sm sm:grid-cols-3"
      data-testid={tense === 'would' ? 'outcome-check-counts' : 'outcome-write-counts'}
    >
      {items.map((i) => (
        <div key={i.label}>
          <dt className="text-xs font-semibold text-graphite uppercase">{i.label}</dt>
          <dd className="figure text-lg">{n(i.value)}</dd>
        </div>
      ))}
    </dl>
  );
}

function CheckResult({ checked, chunks }: { checked: Checked; chunks: OutcomeFileRow[][] }) {
  if (checked.failures.length > 0) {
    const other = checked.failures.filter((f) => rowIssues(f.error).length === 0);
    return (
      <>
        <Callout tone="danger" role="alert" title="Nothing was recorded">
          The server found problems
          {chunks.length > 1 ? ` in ${plural(checked.failures.length, 'part')} of ${n(chunks.length)}` : ''}.
          Fix the rows below and choose the file again.
          {other.map((f) => (
            <span key={f.index} className="block">
              {linesText(f.first, f.last)}: {errorMessage(f.error)}
            </span>
          ))}
        </Callout>
        {checked.problems.length > 0 && (
          <ProblemsTable problems={checked.problems} label="Problems found by the server" />
        )}
      </>
    );
  }
  const c = checked.counts;
  return (
    <>
      <CountsList counts={c} tense="would" />
      {c.created + c.corrected === 0 ? (
        <Callout tone="info" role="status" title="Nothing new to record">
          Every row is already recorded with the same value and date; recording the file again would change
          nothing.
        </Callout>
      ) : (
        <Callout tone="success" role="status" title="Every row can be recorded">
          Nothing is recorded yet. {plural(c.created, 'new value')}
          {c.corrected > 0 &&
            `, ${plural(c.corrected, 'correction')} of values already recorded (a reason is needed)`}
          {c.unchanged > 0 &&
            `; ${plural(c.unchanged, 'row is', 'rows are')} already recorded exactly so and will be left as they are`}
          .
        </Callout>
      )}
    </>
  );
}

function WriteResult({ written, chunks }: { written: Written; chunks: OutcomeFileRow[][] }) {
  const sum = totals(written.done);
  const many = chunks.length > 1;
  const stopped = written.stopped;
  return (
    <>
      <CountsList counts={sum} tense="did" />
      {!stopped ? (
        <Callout
          tone="success"
          role="status"
          title={`${plural(sum.created + sum.corrected, 'outcome')} recorded`}
        >
          {plural(sum.created, 'new value')}, {plural(sum.corrected, 'correction')}
          {sum.unchanged > 0 && `, ${n(sum.unchanged)} unchanged`}. Each is in the audit trail.
        </Callout>
      ) : (
        <Callout
          tone="danger"
          role="alert"
          title={stopped.reasonNeeded ? 'A reason is needed to go on' : 'Recording stopped'}
        >
          {many ? `Part ${n(stopped.failed.index + 1)} of ${n(chunks.length)}` : 'The file'} (
          {linesText(stopped.failed.first, stopped.failed.last)}) was refused:{' '}
          {errorMessage(stopped.failed.error)} Nothing of {many ? 'that part' : 'it'} was recorded.
          {written.done.length > 0 && (
            <span className="block">
              Already recorded and kept: {describeParts(written.done)} ({plural(sum.created, 'new value')},{' '}
              {plural(sum.corrected, 'correction')}, {n(sum.unchanged)} unchanged).
            </span>
          )}
          {stopped.notSent.length > 0 && (
            <span className="block">
              Not sent:{' '}
              {stopped.notSent
                .map((i) => `part ${n(i + 1)} (${linesText(chunks[i]![0]!.line, chunks[i]!.at(-1)!.line)})`)
                .join(', ')}
              .
            </span>
          )}
          <span className="block">
            Sending the file again is safe: rows already recorded come back as unchanged.
          </span>
        </Callout>
      )}
      {stopped && stopped.problems.length > 0 && (
        <ProblemsTable problems={stopped.problems} label="Rows the server refused" />
      )}
      {many && <PartsTable written={written} chunks={chunks} />}
    </>
  );
}

function describeParts(done: ChunkDone[]): string {
  return done.map((d) => `part ${n(d.index + 1)} (${linesText(d.first, d.last)})`).join(', ');
}

function PartsTable({ written, chunks }: { written: Written; chunks: OutcomeFileRow[][] }) {
  const byIndex = new Map(written.done.map((d) => [d.index, d]));
  return (
    <Table aria-label="Parts of the file">
      <THead>
        <TR>
          <TH>Part</TH>
          <TH>Lines</TH>
          <TH>State</TH>
          <TH className="text-right">Recorded</TH>
          <TH className="text-right">Corrected</TH>
          <TH className="text-right">Unchanged</TH>
        </TR>
      </THead>
      <TBody>
        {chunks.map((chunk, i) => {
          const d = byIndex.get(i);
          const state = d ? 'Recorded' : written.stopped?.failed.index === i ? 'Refused' : 'Not sent';
          return (
            <TR key={i}>
              <TD className="figure">{i + 1}</TD>
              <TD className="figure">
                {n(chunk[0]!.line)}–{n(chunk.at(-1)!.line)}
              </TD>
              <TD>{state}</TD>
              <TD className="figure text-right">{d ? n(d.counts.created) : '–'}</TD>
              <TD className="figure text-right">{d ? n(d.counts.corrected) : '–'}</TD>
              <TD className="figure text-right">{d ? n(d.counts.unchanged) : '–'}</TD>
            </TR>
          );
        })}
      </TBody>
    </Table>
  );
}
