import { describe, expect, it } from 'vitest';
import {
  chunkLines,
  chunkRows,
  decodeOutcomeFile,
  detectDelimiter,
  MAX_FILE_ROWS,
  MAX_LISTED_PROBLEMS,
  parseOutcomeFile,
  parseValueCell,
  serverIssuesToProblems,
  type OutcomeFileRow,
} from './outcome-csv.js';

const today = '2026-12-02';
const parse = (text: string) => parseOutcomeFile(text, { today });
const utf8 = (text: string) => new TextEncoder().encode(text);

describe('decodeOutcomeFile', () => {
  it('when the file is UTF-8 with a byte-order mark, then the mark is dropped and the text kept', () => {
    const bytes = new Uint8Array([
      0xef,
      0xbb,
      0xbf,
      ...utf8('participant_code,value,measured_on\nZ-Ø1,1,2026-01-01\n'),
    ]);
    const decoded = decodeOutcomeFile(bytes);
    expect(decoded).toEqual({ text: 'participant_code,value,measured_on\nZ-Ø1,1,2026-01-01\n' });
  });

  it('when the file is UTF-16 (either byte order), then it is refused by name', () => {
    for (const bom of [
      [0xff, 0xfe],
      [0xfe, 0xff],
    ]) {
      const decoded = decodeOutcomeFile(new Uint8Array([...bom, 0x70, 0x00]));
      expect('error' in decoded && decoded.error).toMatch(/UTF-16/);
    }
  });

  it('when the bytes are not UTF-8 (a Latin-1 "é", 0xE9), then it is refused rather than guessed', () => {
    const decoded = decodeOutcomeFile(
      new Uint8Array([...utf8('participant_code,value,measured_on\nRen'), 0xe9, ...utf8(',1,2026-01-01\n')]),
    );
    expect('error' in decoded && decoded.error).toMatch(/not UTF-8/);
  });
});

describe('detectDelimiter', () => {
  it.each([
    ['participant_code,value,measured_on', ','],
    ['participant_code;value;measured_on', ';'],
    // A quoted header cell with a comma inside does not count (RFC 4180, 2.6).
    ['"participant,code";value;measured_on', ';'],
    ['participant_code', ','],
  ])('%s → %s', (header, expected) => {
    expect(detectDelimiter(`${header}\r\nx`)).toBe(expected);
  });
});

describe('parseValueCell', () => {
  it.each([
    ['412', ',', 412],
    [' 412.5 ', ',', 412.5],
    ['-3', ',', -3],
    ['.5', ',', 0.5],
    ['1e3', ',', 1000],
    ['412,5', ';', 412.5],
    ['412.5', ';', 412.5],
  ] as const)('"%s" in a "%s" file → %s', (cell, delimiter, expected) => {
    expect(parseValueCell(cell, delimiter)).toEqual({ value: expected });
  });

  it.each([
    ['', ',', 'Enter a value'],
    ['abc', ',', '“abc” is not a number'],
    ['412,5', ',', 'write decimals with a point'],
    ['1.234,5', ';', 'is not a number'],
    ['1 234', ';', 'is not a number'],
    ['NaN', ',', 'is not a number'],
    ['Infinity', ',', 'is not a number'],
    ['1e999', ',', 'too large'],
  ] as const)('"%s" in a "%s" file is refused: %s', (cell, delimiter, message) => {
    const parsed = parseValueCell(cell, delimiter);
    expect('error' in parsed && parsed.error).toContain(message);
  });
});

describe('parseOutcomeFile', () => {
  it('when a comma file is valid, then every row is kept with its line, trimmed and typed', () => {
    const r = parse(
      'participant_code,value,measured_on\r\nK-ALB-1, 412 ,2026-11-30\r\nK-ALB-2,398.5,2026-12-02\r\n',
    );
    expect(r.fileProblem).toBeNull();
    expect(r.problems).toEqual([]);
    expect(r.delimiter).toBe(',');
    expect(r.rows).toEqual([
      { participantCode: 'K-ALB-1', value: 412, measuredOn: '2026-11-30', line: 2 },
      { participantCode: 'K-ALB-2', value: 398.5, measuredOn: '2026-12-02', line: 3 },
    ]);
  });

  it('when a semicolon file writes decimal commas and a header in capitals, then both are read', () => {
    const r = parse('Participant_Code;VALUE;measured_on\nK-1;412,5;2026-11-30\n');
    expect(r.delimiter).toBe(';');
    expect(r.rows).toEqual([{ participantCode: 'K-1', value: 412.5, measuredOn: '2026-11-30', line: 2 }]);
  });

  it('when columns come in another order, then they are read by name', () => {
    const r = parse('measured_on,value,participant_code\n2026-11-30,300,K-9\n');
    expect(r.rows).toEqual([{ participantCode: 'K-9', value: 300, measuredOn: '2026-11-30', line: 2 }]);
  });

  it('when cells are quoted with doubled quotes inside (RFC 4180, 2.7), then they are unquoted', () => {
    const r = parse('participant_code,value,measured_on\n"K ""A"" 1","412.5","2026-11-30"\n');
    expect(r.rows[0]).toMatchObject({ participantCode: 'K "A" 1', value: 412.5 });
  });

  it('when blank lines and rows of empty cells appear, then they are skipped and lines still count', () => {
    const r = parse('participant_code,value,measured_on\n\nK-1,1,2026-11-30\n,,\nK-2,2,2026-11-30\n');
    expect(r.rowCount).toBe(2);
    expect(r.rows.map((x) => x.line)).toEqual([3, 5]);
  });

  it('when rows have problems, then each is named by line and column, and no row is offered for sending', () => {
    const r = parse(
      [
        'participant_code,value,measured_on',
        'K-1,412,2026-11-30', // fine
        ',412,2026-11-30', // no code
        'K-3,,2026-11-30', // no value
        'K-4,12a,2026-11-30', // not a number
        'K-5,300,30/11/2026', // other date format
        'K-6,300,2026-02-30', // not a calendar day
        'K-7,300,2026-12-03', // after today
        'K-1,415,2026-11-30', // listed twice
        'K-9,300', // a cell short
      ].join('\n'),
    );
    expect(r.fileProblem).toBeNull();
    expect(r.rows).toEqual([]);
    expect(r.badRows).toBe(8);
    expect(r.problems.map((p) => [p.line, p.column])).toEqual([
      [3, 'participant_code'],
      [4, 'value'],
      [5, 'value'],
      [6, 'measured_on'],
      [7, 'measured_on'],
      [8, 'measured_on'],
      [9, 'participant_code'],
      [10, '(row)'],
    ]);
    expect(r.problems.find((p) => p.line === 3)!.message).toBe('Enter the participant code');
    expect(r.problems.find((p) => p.line === 7)!.message).toBe('Not a real calendar date');
    expect(r.problems.find((p) => p.line === 8)!.message).toBe('The measurement date is in the future');
    expect(r.problems.find((p) => p.line === 9)!.message).toBe(
      'K-1 is already on line 2; list each participant once',
    );
    expect(r.problems.find((p) => p.line === 10)!.message).toBe('This row has 2 cells; the header has 3');
  });

  it('when 29 February is in a leap year, then it is a date; in a common year it is not (Gregorian rule)', () => {
    expect(parse('participant_code,value,measured_on\nK-1,1,2024-02-29\n').rows).toHaveLength(1);
    expect(parse('participant_code,value,measured_on\nK-1,1,2025-02-29\n').badRows).toBe(1);
    expect(parse('participant_code,value,measured_on\nK-1,1,1900-02-29\n').badRows).toBe(1);
    expect(parse('participant_code,value,measured_on\nK-1,1,2000-02-29\n').rows).toHaveLength(1);
  });

  it.each([
    ['', 'empty'],
    ['participant_code,value,measured_on\n', 'no rows'],
    ['participant_code,value\nK-1,1\n', 'missing “measured_on”'],
    ['participant_code,value,measured_on,arm\nK-1,1,2026-11-30,A\n', 'unknown “arm”'],
    ['participant_code,value,value,measured_on\nK-1,1,1,2026-11-30\n', 'listed twice: “value”'],
    ['participant_code,value,measured_on\n"K-1,1,2026-11-30\n', 'a quoted cell is never closed'],
  ])('when the file is %j, then the whole file is refused: %s', (text, message) => {
    const r = parse(text);
    expect(r.fileProblem).toContain(message);
    expect(r.rows).toEqual([]);
  });

  it('when the file has more rows than can be read at once, then it is refused with the count', () => {
    const lines = ['participant_code,value,measured_on'];
    for (let i = 0; i <= MAX_FILE_ROWS; i++) lines.push(`K-${i},1,2026-11-30`);
    const r = parse(lines.join('\n'));
    expect(r.fileProblem).toContain('100,001 rows');
  });

  it('when more problems than are listed, then the count still covers all', () => {
    const lines = ['participant_code,value,measured_on'];
    for (let i = 0; i < MAX_LISTED_PROBLEMS + 20; i++) lines.push(`K-${i},x,2026-11-30`);
    const r = parse(lines.join('\n'));
    expect(r.problems).toHaveLength(MAX_LISTED_PROBLEMS);
    expect(r.problemCount).toBe(MAX_LISTED_PROBLEMS + 20);
    expect(r.badRows).toBe(MAX_LISTED_PROBLEMS + 20);
  });
});

describe('chunkRows and chunkLines', () => {
  const rows = (count: number): OutcomeFileRow[] =>
    Array.from({ length: count }, (_, i) => ({
      participantCode: `K-${i}`,
      value: i,
      measuredOn: '2026-11-30',
      line: i + 2,
    }));

  it.each([
    [0, []],
    [1, [1]],
    [5000, [5000]],
    [5001, [5000, 1]],
    [12345, [5000, 5000, 2345]],
  ])('%i rows → parts of %j (at most 5,000, the API limit)', (count, sizes) => {
    const chunks = chunkRows(rows(count));
    expect(chunks.map((c) => c.length)).toEqual(sizes);
    expect(chunks.flat()).toEqual(rows(count));
  });

  it('names the file lines each part covers', () => {
    const [first, second] = chunkRows(rows(7), 5);
    expect(chunkLines(first!)).toEqual({ first: 2, last: 6 });
    expect(chunkLines(second!)).toEqual({ first: 7, last: 8 });
  });

  it('refuses a size that is not a positive integer', () => {
    expect(() => chunkRows(rows(3), 0)).toThrow(RangeError);
    expect(() => chunkRows(rows(3), 1.5)).toThrow(RangeError);
  });
});

describe('serverIssuesToProblems', () => {
  it('maps row indexes within one request to lines of the file and fields to column names', () => {
    const chunk: OutcomeFileRow[] = [
      { participantCode: 'A', value: 1, measuredOn: '2026-11-30', line: 5002 },
      { participantCode: 'B', value: 1, measuredOn: '2026-11-30', line: 5004 },
    ];
    expect(
      serverIssuesToProblems(
        [
          { path: ['rows', '1', 'participantCode'], message: 'No participant B in this study' },
          { path: ['rows', '0', 'measuredOn'], message: 'Measured before A was enrolled (2026-12-01)' },
          { path: ['outcomeKey'], message: 'Unknown outcome' },
        ],
        chunk,
      ),
    ).toEqual([
      { line: 5004, column: 'participant_code', message: 'No participant B in this study' },
      { line: 5002, column: 'measured_on', message: 'Measured before A was enrolled (2026-12-01)' },
      { line: 0, column: 'outcomeKey', message: 'Unknown outcome' },
    ]);
  });
});
