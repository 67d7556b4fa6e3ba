import { Callout } from '../../../components/ui/callout.js';
import { Table, TBody, TD, TH, THead, TR } from '../../../components/ui/table.js';
import { errorMessage } from '../../../lib/form-errors.js';
import {
  linesText,
  rowIssues,
  totals,
  type ChunkDone,
  type ChunkFailed,
  type Counts,
} from './chunked-send.js';
import {
  MAX_ROWS_PER_REQUEST,
  type FileProblem,
  type OutcomeFileRow,
  type ParsedOutcomeFile,
} from './outcome-csv.js';

/* What the upload shows: the file as read, its problems, progress, the server's check and the result. */

export type Busy = { what: 'checking' | 'recording'; settled: number; total: number } | null;

export type Checked = { counts: Counts; problems: FileProblem[]; failures: ChunkFailed[] };

/** Where a write stands: what went in, and where it stopped if it did. */
export type Written = {
  done: ChunkDone[];
  stopped: { failed: ChunkFailed; notSent: number[]; reasonNeeded: boolean; problems: FileProblem[] } | null;
};

export const n = (x: number) => x.toLocaleString('en');
export const plural = (x: number, one: string, many = `${one}s`) => `${n(x)} ${x === 1 ? one : many}`;

export function FileSummary({ parsed }: { parsed: ParsedOutcomeFile }) {
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

export function RowsPreview({ rows, unit }: { rows: OutcomeFileRow[]; unit: string | null }) {
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

export function ProblemsTable({ problems, label }: { problems: FileProblem[]; label: string }) {
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

export function ChunkProgress({ busy, rows }: { busy: NonNullable<Busy>; rows: number }) {
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

export function CheckResult({ checked, chunks }: { checked: Checked; chunks: OutcomeFileRow[][] }) {
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

export function WriteResult({ written, chunks }: { written: Written; chunks: OutcomeFileRow[][] }) {
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
