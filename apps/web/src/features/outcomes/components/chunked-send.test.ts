import { describe, expect, it } from 'vitest';
import { ApiError } from '../../../lib/api-client.js';
import { linesText, needsReason, rowIssues, sendChunks, totals, type Counts } from './chunked-send.js';
import { chunkRows, type OutcomeFileRow } from './outcome-csv.js';

const rows = (count: number): OutcomeFileRow[] =>
  Array.from({ length: count }, (_, i) => ({
    participantCode: `K-${i}`,
    value: i,
    measuredOn: '2026-11-30',
    line: i + 2,
  }));

const reasonError = () =>
  new ApiError(
    400,
    'validation_failed',
    '3 row(s) change values already recorded: give a reason for the correction',
    {
      issues: [{ path: ['reason'], message: 'A reason is required to correct recorded outcome values' }],
    },
  );

/** A sender that answers from the rows it is given, and refuses the parts listed in `refuse`. */
function sender(refuse: Map<number, unknown> = new Map()) {
  const calls: number[] = [];
  const send = async (part: OutcomeFileRow[], index: number): Promise<Counts> => {
    calls.push(index);
    const error = refuse.get(index);
    if (error) throw error;
    return { created: part.length - 1, corrected: 1, unchanged: 0 };
  };
  return { calls, send };
}

describe('sendChunks', () => {
  const chunks = chunkRows(rows(12), 5); // parts of 5, 5, 2 rows: lines 2-6, 7-11, 12-13

  it('when every part is accepted, then all are sent in order and the totals add up', async () => {
    const { calls, send } = sender();
    const progress: number[] = [];
    const run = await sendChunks(chunks, send, { stopOnFailure: true, onProgress: (s) => progress.push(s) });
    expect(calls).toEqual([0, 1, 2]);
    expect(progress).toEqual([1, 2, 3]);
    expect(run.failed).toEqual([]);
    expect(run.notSent).toEqual([]);
    expect(totals(run.done)).toEqual({ created: 4 + 4 + 1, corrected: 3, unchanged: 0 });
  });

  it('when a write refuses part 2, then part 1 is reported in, part 2 refused by its lines, and part 3 not sent', async () => {
    const error = new ApiError(0, 'network', 'The server could not be reached.');
    const { calls, send } = sender(new Map([[1, error]]));
    const run = await sendChunks(chunks, send, { stopOnFailure: true });
    expect(calls).toEqual([0, 1]);
    expect(run.done.map((d) => [d.index, d.first, d.last])).toEqual([[0, 2, 6]]);
    expect(run.failed).toEqual([{ index: 1, first: 7, last: 11, rows: 5, error }]);
    expect(run.notSent).toEqual([2]);
  });

  it('when a check finds problems in two parts, then every part is still tried', async () => {
    const { calls, send } = sender(
      new Map([
        [0, new Error('a')],
        [2, new Error('b')],
      ]),
    );
    const run = await sendChunks(chunks, send, { stopOnFailure: false });
    expect(calls).toEqual([0, 1, 2]);
    expect(run.failed.map((f) => f.index)).toEqual([0, 2]);
    expect(run.done.map((d) => d.index)).toEqual([1]);
    expect(run.notSent).toEqual([]);
  });

  it('when resumed at a part, then the parts before it are not sent again', async () => {
    const { calls, send } = sender();
    const run = await sendChunks(chunks, send, { stopOnFailure: true, startAt: 1 });
    expect(calls).toEqual([1, 2]);
    expect(run.done.map((d) => d.index)).toEqual([1, 2]);
  });
});

describe('needsReason and rowIssues', () => {
  it('recognises the server asking only for a reason', () => {
    expect(needsReason(reasonError())).toBe(true);
    const rowProblem = new ApiError(400, 'validation_failed', 'Some rows cannot be recorded', {
      issues: [{ path: ['rows', '0', 'participantCode'], message: 'No participant X in this study' }],
    });
    expect(needsReason(rowProblem)).toBe(false);
    expect(needsReason(new Error('x'))).toBe(false);
  });

  it('reads row issues from validation errors and from a refusal of another site’s rows', () => {
    const forbidden = new ApiError(
      403,
      'forbidden',
      'You can only record outcomes of participants of your own site',
      {
        issues: [
          { path: ['rows', '3', 'participantCode'], message: 'K-3 is not a participant of your site' },
        ],
      },
    );
    expect(rowIssues(forbidden)).toEqual([
      { path: ['rows', '3', 'participantCode'], message: 'K-3 is not a participant of your site' },
    ]);
    expect(rowIssues(new ApiError(403, 'forbidden', 'Your role does not allow this'))).toEqual([]);
    expect(rowIssues(new ApiError(500, 'internal', 'x'))).toEqual([]);
  });

  it('writes line spans in words', () => {
    expect(linesText(2, 5001)).toBe('lines 2–5,001');
    expect(linesText(7, 7)).toBe('line 7');
  });
});
