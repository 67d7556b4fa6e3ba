import type { OutcomesPutResponse } from '@counterpoise/contracts/analysis';
import { isApiError } from '../../../lib/api-client.js';
import { chunkLines, type OutcomeFileRow } from './outcome-csv.js';

/*
 * Sending a file's rows in requests of at most 5,000, one after the other. Each request is
 * atomic on the server (all its rows or none), so after a failure the chunks before it are in
 * and the rest are not; the run says exactly which, by lines of the file.
 */

export type Counts = Pick<OutcomesPutResponse, 'created' | 'corrected' | 'unchanged'>;

export type ChunkDone = { index: number; first: number; last: number; rows: number; counts: Counts };
export type ChunkFailed = { index: number; first: number; last: number; rows: number; error: unknown };

export type ChunkRun = {
  done: ChunkDone[];
  /** For a write: the first chunk refused (later ones were not sent). For a check: every chunk refused. */
  failed: ChunkFailed[];
  /** Chunks not sent because an earlier one failed (writes stop at the first failure). */
  notSent: number[];
};

export type SendChunk = (rows: OutcomeFileRow[], index: number) => Promise<Counts>;

/**
 * Sends `chunks` from `startAt` on. `stopOnFailure` (writes) stops at the first refused chunk;
 * without it (checks, which write nothing) every chunk is tried so all problems are found.
 * `onProgress` is called after each chunk with the number of chunks settled so far.
 */
export async function sendChunks(
  chunks: readonly OutcomeFileRow[][],
  send: SendChunk,
  opts: { stopOnFailure: boolean; startAt?: number; onProgress?: (settled: number, total: number) => void },
): Promise<ChunkRun> {
  const run: ChunkRun = { done: [], failed: [], notSent: [] };
  const start = opts.startAt ?? 0;
  for (let index = start; index < chunks.length; index++) {
    const rows = chunks[index]!;
    const span = { index, ...chunkLines(rows), rows: rows.length };
    try {
      run.done.push({ ...span, counts: await send(rows, index) });
    } catch (error) {
      run.failed.push({ ...span, error });
      if (opts.stopOnFailure) {
        for (let rest = index + 1; rest < chunks.length; rest++) run.notSent.push(rest);
        opts.onProgress?.(index + 1, chunks.length);
        break;
      }
    }
    opts.onProgress?.(index + 1, chunks.length);
  }
  return run;
}

export function totals(done: readonly ChunkDone[]): Counts {
  return done.reduce(
    (sum, d) => ({
      created: sum.created + d.counts.created,
      corrected: sum.corrected + d.counts.corrected,
      unchanged: sum.unchanged + d.counts.unchanged,
    }),
    { created: 0, corrected: 0, unchanged: 0 },
  );
}

/** The server refused a request only because rows change recorded values and no reason was given. */
export function needsReason(error: unknown): boolean {
  if (!isApiError(error, 'validation_failed')) return false;
  const issues = error.fieldIssues();
  return issues.length > 0 && issues.every((i) => i.path.length === 1 && i.path[0] === 'reason');
}

/** Row issues of a refused request (validation, or rows of another site), if it named any. */
export function rowIssues(error: unknown): { path: string[]; message: string }[] {
  if (!isApiError(error)) return [];
  if (error.code === 'validation_failed') return error.fieldIssues();
  if (error.code === 'forbidden' && typeof error.details === 'object' && error.details !== null) {
    const issues = (error.details as { issues?: unknown }).issues;
    if (Array.isArray(issues)) {
      return issues.flatMap((raw) => {
        const { path, message } = (raw ?? {}) as { path?: unknown; message?: unknown };
        return Array.isArray(path) && typeof message === 'string'
          ? [{ path: path.map(String), message }]
          : [];
      });
    }
  }
  return [];
}

/** "lines 2–5,001" */
export function linesText(first: number, last: number): string {
  return first === last
    ? `line ${first.toLocaleString('en')}`
    : `lines ${first.toLocaleString('en')}–${last.toLocaleString('en')}`;
}
