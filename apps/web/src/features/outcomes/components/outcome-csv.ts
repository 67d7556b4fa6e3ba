import { parse } from 'csv-parse/browser/esm/sync';
import { outcomeRowSchema, type OutcomeRow } from '@counterpoise/contracts/analysis';

/*
 * Reading an outcome file in the browser, before anything is sent: decode (UTF-8 only), find the
 * separator, parse with csv-parse (the parser the API's participant import uses), and check every
 * row with the same schema the API applies, plus what only the file can show (a participant
 * listed twice). Row numbers are lines of the file, the header being line 1.
 */

export const outcomeColumns = [
  { name: 'participant_code', meaning: 'The participant code as shown on the Participants tab (required)' },
  { name: 'value', meaning: 'The measured value, a number (required)' },
  {
    name: 'measured_on',
    meaning: 'The date of the measurement, YYYY-MM-DD, not before enrollment (required)',
  },
] as const;

/** The API takes at most this many rows per request (outcomesPutBodySchema). */
export const MAX_ROWS_PER_REQUEST = 5000;
/** Rows one file may hold; larger files should be split. */
export const MAX_FILE_ROWS = 100_000;
/** Problems listed per file; the count still covers all of them. */
export const MAX_LISTED_PROBLEMS = 500;

export type Delimiter = ',' | ';';

/** One valid row of the file, with the line it came from. */
export type OutcomeFileRow = OutcomeRow & { line: number };

export type FileProblem = { line: number; column: string; message: string };

export type ParsedOutcomeFile = {
  delimiter: Delimiter;
  /** Data rows read (blank lines are skipped). */
  rowCount: number;
  /** Rows that passed every check, in file order. Empty when the header is unusable. */
  rows: OutcomeFileRow[];
  /** Lines with at least one problem. */
  badRows: number;
  /** At most MAX_LISTED_PROBLEMS, by line. */
  problems: FileProblem[];
  problemCount: number;
  /** A problem with the file as a whole (header, size, quoting); rows are not checked then. */
  fileProblem: string | null;
};

/**
 * The file's text, or a plain message. Only UTF-8 (with or without a byte-order mark) is read:
 * UTF-16 is named as such, and bytes that are not UTF-8 are refused rather than guessed.
 */
export function decodeOutcomeFile(bytes: Uint8Array): { text: string } | { error: string } {
  if ((bytes[0] === 0xff && bytes[1] === 0xfe) || (bytes[0] === 0xfe && bytes[1] === 0xff)) {
    return { error: 'This file is saved as UTF-16. Save it as “CSV UTF-8” and choose it again.' };
  }
  try {
    // TextDecoder drops a UTF-8 byte-order mark itself.
    return { text: new TextDecoder('utf-8', { fatal: true }).decode(bytes) };
  } catch {
    return {
      error:
        'This file is not UTF-8 text (it may be in an older encoding). Save it as “CSV UTF-8” and choose it again.',
    };
  }
}

/** The separator of the header line: a semicolon when it has more semicolons than commas. */
export function detectDelimiter(text: string): Delimiter {
  const header = text.slice(0, text.search(/\r?\n|$/));
  let commas = 0;
  let semicolons = 0;
  let quoted = false;
  for (const ch of header) {
    if (ch === '"') quoted = !quoted;
    else if (!quoted && ch === ',') commas++;
    else if (!quoted && ch === ';') semicolons++;
  }
  return semicolons > commas ? ';' : ',';
}

const shape = outcomeRowSchema.shape;
const NUMBER = /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/;

/**
 * A cell as a number, or a message. Semicolon files may write decimals with a comma (12,5), as
 * spreadsheets in many locales save them; thousands separators are not accepted.
 */
export function parseValueCell(cell: string, delimiter: Delimiter): { value: number } | { error: string } {
  const raw = cell.trim();
  if (raw === '') return { error: 'Enter a value' };
  const text = delimiter === ';' && /^[+-]?\d*,\d+$/.test(raw) ? raw.replace(',', '.') : raw;
  if (!NUMBER.test(text)) {
    if (delimiter === ',' && /^[+-]?\d*,\d+$/.test(raw)) {
      return {
        error: `“${raw}” is not a number: in a comma-separated file write decimals with a point (e.g. 12.5)`,
      };
    }
    return { error: `“${raw}” is not a number` };
  }
  const value = Number(text);
  if (!Number.isFinite(value)) return { error: `“${raw}” is too large` };
  return { value };
}

type CsvRecord = { record: string[]; info: { lines: number } };

/** Parses and checks the whole file. `today` is the UTC date (YYYY-MM-DD) the API compares with. */
export function parseOutcomeFile(text: string, { today }: { today: string }): ParsedOutcomeFile {
  const delimiter = detectDelimiter(text);
  const empty = { delimiter, rowCount: 0, rows: [], badRows: 0, problems: [], problemCount: 0 };
  let records: CsvRecord[];
  try {
    records = parse(text, {
      delimiter,
      info: true,
      bom: true,
      relax_column_count: true,
      skip_empty_lines: true,
      skip_records_with_empty_values: true,
    }) as unknown as CsvRecord[];
  } catch (error) {
    const where = (error as { lines?: number }).lines;
    const code = (error as { code?: string }).code;
    const what =
      code === 'CSV_QUOTE_NOT_CLOSED'
        ? 'a quoted cell is never closed'
        : code === 'CSV_INVALID_CLOSING_QUOTE'
          ? 'a quote inside a cell is not doubled ("")'
          : 'the file could not be read as CSV';
    return { ...empty, fileProblem: `The file cannot be read: ${what}${where ? ` (line ${where})` : ''}.` };
  }
  const [head, ...body] = records;
  if (!head)
    return { ...empty, fileProblem: 'The file is empty: it needs a header line and at least one row.' };

  const header = head.record.map((h) => h.trim().toLowerCase());
  const expected = outcomeColumns.map((c) => c.name);
  const unknown = header.filter((h) => !(expected as string[]).includes(h));
  const missing = expected.filter((c) => !header.includes(c));
  const twice = header.filter((h, i) => header.indexOf(h) !== i);
  const headerProblems = [
    ...(missing.length ? [`missing ${list(missing)}`] : []),
    ...(unknown.length ? [`unknown ${list(unknown.map((u) => u || '(blank)'))}`] : []),
    ...(twice.length ? [`listed twice: ${list([...new Set(twice)])}`] : []),
  ];
  if (headerProblems.length) {
    return {
      ...empty,
      fileProblem: `The header line does not match: ${headerProblems.join('; ')}. The first line must name the columns participant_code, value and measured_on${delimiter === ';' ? ' (separated by semicolons)' : ''}.`,
    };
  }
  if (body.length === 0) return { ...empty, fileProblem: 'The file has a header line but no rows.' };
  if (body.length > MAX_FILE_ROWS) {
    return {
      ...empty,
      rowCount: body.length,
      fileProblem: `The file has ${body.length.toLocaleString('en')} rows; at most ${MAX_FILE_ROWS.toLocaleString('en')} can be read at once. Split it into smaller files.`,
    };
  }

  const col = (name: string) => header.indexOf(name);
  const at = { code: col('participant_code'), value: col('value'), date: col('measured_on') };
  const rows: OutcomeFileRow[] = [];
  const problems: FileProblem[] = [];
  const firstLine = new Map<string, number>();
  const bad = new Set<number>();
  const add = (line: number, column: string, message: string) => {
    bad.add(line);
    problems.push({ line, column, message });
  };

  for (const { record, info } of body) {
    const line = info.lines;
    if (record.length !== header.length) {
      add(line, '(row)', `This row has ${record.length} cells; the header has ${header.length}`);
      continue;
    }
    const before = bad.size;
    const code = shape.participantCode.safeParse(record[at.code] ?? '');
    if (!code.success) add(line, 'participant_code', firstMessage(code.error));
    const value = parseValueCell(record[at.value] ?? '', delimiter);
    if ('error' in value) add(line, 'value', value.error);
    const date = shape.measuredOn.safeParse((record[at.date] ?? '').trim());
    if (!date.success) add(line, 'measured_on', firstMessage(date.error));
    else if (date.data > today) add(line, 'measured_on', 'The measurement date is in the future');
    if (code.success) {
      const first = firstLine.get(code.data);
      if (first !== undefined)
        add(line, 'participant_code', `${code.data} is already on line ${first}; list each participant once`);
      else firstLine.set(code.data, line);
    }
    if (bad.size === before && code.success && date.success && 'value' in value) {
      rows.push({ participantCode: code.data, value: value.value, measuredOn: date.data, line });
    }
  }

  return {
    delimiter,
    rowCount: body.length,
    rows: bad.size ? [] : rows,
    badRows: bad.size,
    problems: problems.slice(0, MAX_LISTED_PROBLEMS),
    problemCount: problems.length,
    fileProblem: null,
  };
}

function firstMessage(error: { issues: readonly { message: string }[] }): string {
  return error.issues[0]?.message ?? 'Not valid';
}

function list(names: string[]): string {
  return names.map((n) => `“${n}”`).join(', ');
}

/** Rows in requests of at most `size` (the API's limit by default), in file order. */
export function chunkRows<T>(rows: readonly T[], size = MAX_ROWS_PER_REQUEST): T[][] {
  if (!Number.isInteger(size) || size < 1) throw new RangeError('chunk size must be a positive integer');
  const out: T[][] = [];
  for (let i = 0; i < rows.length; i += size) out.push(rows.slice(i, i + size));
  return out;
}

/** The file lines a chunk covers, for messages ("lines 2–5,001"). */
export function chunkLines(chunk: readonly OutcomeFileRow[]): { first: number; last: number } {
  return { first: chunk[0]?.line ?? 0, last: chunk.at(-1)?.line ?? 0 };
}

const columnOfField: { [field: string]: string } = {
  participantCode: 'participant_code',
  value: 'value',
  measuredOn: 'measured_on',
};

/**
 * The server's row issues (paths like ['rows', '17', 'measuredOn'], counted within one request)
 * as problems on lines of the file. Issues that name no row are kept with line 0.
 */
export function serverIssuesToProblems(
  issues: readonly { path: readonly string[]; message: string }[],
  chunk: readonly OutcomeFileRow[],
): FileProblem[] {
  return issues.map((issue) => {
    const [head, index, field] = issue.path;
    const row = head === 'rows' && index !== undefined ? chunk[Number(index)] : undefined;
    return {
      line: row?.line ?? 0,
      column: row ? (columnOfField[field ?? ''] ?? '(row)') : issue.path.join('.') || '(file)',
      message: issue.message,
    };
  });
}

/** A header-only template to download. */
export function templateCsv(): string {
  return `${outcomeColumns.map((c) => c.name).join(',')}\n`;
}
