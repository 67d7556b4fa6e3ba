import { createHash } from 'node:crypto';
import fs from 'node:fs';
import { Transform, type TransformCallback } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import { parse } from 'csv-parse';
import { evaluateEligibility, utcToday, type ImportReport } from '@counterpoise/contracts/participants';
import type { EntityManager } from 'typeorm';
import type { AppContext } from '../../app-context.js';
import { inTransaction } from '../../db/transaction.js';
import { AppError } from '../../http/app-error.js';
import { appendAudit, type AuditActor } from '../audit/audit.service.js';
import { loadDesign, type StudyDesign } from '../design/study-design.js';
import { randomCode } from './allocation.service.js';
import { enrollValidated, validateEnrollment, type EnrollmentInput, type Issue, type ValidEnrollment } from './enrollment.service.js';
import { setProgress } from './import-progress.js';
import { checkAnswers } from './screening.service.js';

export const IMPORT_LIMITS = { maxBytes: 64 * 1024 * 1024, maxRows: 100_000, maxErrors: 500 } as const;
// Rows per write batch: small enough that a batch's objects die young, large enough to amortise round trips.
const CHUNK = 1000;

type RowError = { row: number; field: string; message: string };

/** Encoding and delimiter, read from the first bytes: UTF-8 with or without BOM only; `,` `;` or tab. */
export function sniff(head: Buffer): { bom: boolean; delimiter: string } {
  if ((head[0] === 0xff && head[1] === 0xfe) || (head[0] === 0xfe && head[1] === 0xff)) {
    throw new AppError('unsupported_media_type', 'The file is UTF-16 encoded; save it as CSV UTF-8 and upload again');
  }
  const bom = head[0] === 0xef && head[1] === 0xbb && head[2] === 0xbf;
  let text: string;
  try {
    // A cut multi-byte character at the end of the sample is not an error.
    text = new TextDecoder('utf-8', { fatal: true }).decode(head.subarray(bom ? 3 : 0, trimToCharBoundary(head)));
  } catch {
    throw new AppError('unsupported_media_type', 'The file is not UTF-8 text (perhaps Windows-1252 or Latin-1); save it as CSV UTF-8 and upload again');
  }
  const firstLine = text.split(/\r?\n/, 1)[0] ?? '';
  let inQuotes = false;
  const count: Record<string, number> = { ',': 0, ';': 0, '\t': 0 };
  for (const ch of firstLine) {
    if (ch === '"') inQuotes = !inQuotes;
    else if (!inQuotes && ch in count) count[ch]! += 1;
  }
  const [delimiter, n] = Object.entries(count).sort((a, b) => b[1] - a[1])[0]!;
  if (n === 0) throw new AppError('validation_failed', 'Could not find the column separator in the header line (use comma, semicolon or tab)');
  return { bom, delimiter };
}

function trimToCharBoundary(buf: Buffer): number {
  let end = buf.length;
  // Step back over a trailing incomplete UTF-8 sequence (at most 3 continuation bytes).
  for (let k = 1; k <= 3 && end - k >= 0; k++) {
    const b = buf[end - k]!;
    if ((b & 0xc0) === 0x80) continue;
    if (b >= 0xc0) {
      const need = b >= 0xf0 ? 4 : b >= 0xe0 ? 3 : 2;
      if (k < need) end -= k;
    }
    break;
  }
  return end;
}

/** Decodes UTF-8 strictly while hashing the raw bytes; a bad byte anywhere fails the file. */
class Utf8Check extends Transform {
  private decoder = new TextDecoder('utf-8', { fatal: true });
  readonly hash = createHash('sha256');
  private first = true;
  constructor(private readonly bom: boolean) {
    super({ readableObjectMode: false });
  }
  override _transform(chunk: Buffer, _enc: BufferEncoding, done: TransformCallback) {
    this.hash.update(chunk);
    let bytes = chunk;
    if (this.first && this.bom) bytes = chunk.subarray(3);
    this.first = false;
    try {
      done(null, this.decoder.decode(bytes, { stream: true }));
    } catch {
      done(new AppError('unsupported_media_type', 'The file is not valid UTF-8 text; save it as CSV UTF-8 and upload again'));
    }
  }
  override _flush(done: TransformCallback) {
    try {
      done(null, this.decoder.decode());
    } catch {
      done(new AppError('unsupported_media_type', 'The file is not valid UTF-8 text; save it as CSV UTF-8 and upload again'));
    }
  }
}

type Columns = { index: Map<string, number>; names: string[] };

const FIXED = ['participant_ref', 'site', 'status', 'enrollment_date', 'consent_date', 'consent_version', 'exposure'];

function checkHeader(design: StudyDesign, header: string[]): { columns: Columns; errors: RowError[] } {
  const names = header.map((h) => h.trim().toLowerCase());
  const index = new Map(names.map((n, i) => [n, i]));
  const known = new Set([...FIXED, ...design.screeningQuestions.map((q) => q.key)]);
  for (const c of design.covariates) {
    known.add(c.key);
    known.add(`${c.key}_date`);
  }
  const errors: RowError[] = [];
  names.forEach((n, i) => {
    if (!known.has(n)) errors.push({ row: 1, field: n || `column ${i + 1}`, message: `Unknown column '${header[i]}'` });
    if (names.indexOf(n) !== i) errors.push({ row: 1, field: n, message: `Column '${header[i]}' appears twice` });
  });
  for (const n of ['participant_ref', 'site']) if (!index.has(n)) errors.push({ row: 1, field: n, message: `Missing column '${n}'` });
  for (const c of design.covariates) {
    if (c.required && !index.has(c.key)) errors.push({ row: 1, field: c.key, message: `Missing column '${c.key}' (${c.label}, required)` });
    if (index.has(c.key) && !index.has(`${c.key}_date`)) {
      errors.push({ row: 1, field: `${c.key}_date`, message: `Missing column '${c.key}_date' (the date ${c.label} was measured)` });
    }
  }
  if (design.kind === 'observational_cohort' && !index.has('exposure')) errors.push({ row: 1, field: 'exposure', message: "Missing column 'exposure'" });
  return { columns: { index, names }, errors };
}

const YES = new Set(['yes', 'y', 'true', '1']);
const NO = new Set(['no', 'n', 'false', '0']);

function cellValue(kind: string, raw: string, delimiter: string): unknown {
  const v = raw.trim();
  if (kind === 'continuous') {
    // Semicolon files usually come from locales that write decimals with a comma.
    const normal = delimiter === ';' ? v.replace(/^(-?\d+),(\d+)$/, '$1.$2') : v;
    return /^-?\d+(\.\d+)?$/.test(normal) ? Number(normal) : v;
  }
  if (kind === 'binary') {
    const l = v.toLowerCase();
    return YES.has(l) ? true : NO.has(l) ? false : v;
  }
  return v;
}

/** Where an issue of the enrollment validation sits in the file. */
function columnOf(path: string[]): string {
  const [head, key, part] = path;
  if (head === 'baseline') return part === 'measuredOn' ? `${key}_date` : key ?? 'baseline';
  if (head === 'consent') return key === 'date' ? 'consent_date' : 'consent_version';
  if (head === 'siteId') return 'site';
  if (head === 'exposureArmId') return 'exposure';
  if (head === 'enrollmentDate') return 'enrollment_date';
  if (head === 'eligibility') return 'eligibility';
  if (head === 'answers') return key ?? 'answers';
  return head ?? 'row';
}

type ParsedRow =
  | { kind: 'enroll'; importKey: string; value: ValidEnrollment }
  | { kind: 'screen'; importKey: string; siteId: string; siteCode: string; answers: Record<string, unknown> };

type RowContext = {
  design: StudyDesign;
  columns: Columns;
  delimiter: string;
  siteByCode: Map<string, string>;
  allowedSites: string[] | null;
  armByCode: Map<string, string>;
  today: string;
};

function parseRow(rc: RowContext, cells: string[], rowNumber: number, errors: RowError[]): ParsedRow | null {
  const { design, columns } = rc;
  const get = (name: string) => {
    const i = columns.index.get(name);
    return i === undefined ? '' : (cells[i] ?? '').trim();
  };
  const before = errors.length;
  const add = (field: string, message: string) => errors.push({ row: rowNumber, field, message });
  if (cells.length !== columns.names.length) add('row', `Expected ${columns.names.length} cells, found ${cells.length}`);
  const importKey = get('participant_ref');
  if (!importKey) add('participant_ref', 'Give the participant reference');
  else if (importKey.length > 64) add('participant_ref', 'The participant reference is longer than 64 characters');
  const siteCode = get('site').toUpperCase();
  const siteId = rc.siteByCode.get(siteCode);
  if (!siteId) add('site', siteCode ? `Unknown site '${siteCode}'` : 'Give the site code');
  else if (rc.allowedSites && !rc.allowedSites.includes(siteId)) add('site', `You can only import participants of your own sites (not ${siteCode})`);
  const status = (get('status') || 'enrolled').toLowerCase();
  if (status !== 'enrolled' && status !== 'screened') add('status', "Status must be 'enrolled' or 'screened'");

  const baseline: Record<string, unknown> = {};
  const answers: Record<string, unknown> = {};
  for (const c of design.covariates) {
    const raw = get(c.key);
    const date = get(`${c.key}_date`);
    if (!raw && !date) continue;
    const value = cellValue(c.kind, raw, rc.delimiter);
    answers[c.key] = value;
    if (!raw) baseline[c.key] = { value: undefined, measuredOn: date };
    else baseline[c.key] = { value, measuredOn: date };
  }
  for (const q of design.screeningQuestions) {
    const raw = get(q.key);
    if (raw) answers[q.key] = cellValue(q.kind === 'number' ? 'continuous' : q.kind === 'binary' ? 'binary' : 'categorical', raw, rc.delimiter);
  }
  if (errors.length > before || !siteId) return null;

  if (status === 'screened') {
    const issues = checkAnswers(design, answers).filter((i) => !i.message.startsWith('Answer '));
    for (const i of issues) add(columnOf(i.path), i.message);
    return errors.length > before ? null : { kind: 'screen', importKey, siteId, siteCode, answers };
  }
  const exposure = get('exposure').toUpperCase();
  const input: EnrollmentInput = {
    siteId,
    consent: { date: get('consent_date'), version: get('consent_version') },
    baseline,
    enrollmentDate: get('enrollment_date') || rc.today,
    screeningAnswers: answers,
    exposureArmId: exposure ? rc.armByCode.get(exposure) ?? '00000000-0000-4000-8000-000000000000' : null,
    importKey,
  };
  const dateIssues: Issue[] = [];
  if (!/^\d{4}-\d{2}-\d{2}$/.test(input.enrollmentDate!)) dateIssues.push({ path: ['enrollmentDate'], message: 'Use a date like 2026-03-14' });
  if (!/^\d{4}-\d{2}-\d{2}$/.test(input.consent.date)) dateIssues.push({ path: ['consent', 'date'], message: 'Give the consent date, like 2026-03-14' });
  if (!input.consent.version) dateIssues.push({ path: ['consent', 'version'], message: 'Give the consent form version' });
  if (dateIssues.length) {
    for (const i of dateIssues) add(columnOf(i.path), i.message);
    return null;
  }
  const v = validateEnrollment(design, input, rc.today);
  if (!v.ok) {
    for (const i of v.issues) {
      const message = i.path[0] === 'exposureArmId' && exposure && !rc.armByCode.has(exposure) ? `Unknown exposure group '${exposure}'` : i.message;
      add(columnOf(i.path), message);
    }
    return null;
  }
  return { kind: 'enroll', importKey, value: v.value };
}

/** Streams the file through the UTF-8 check and the CSV parser, calling `onRows` with chunks of parsed rows. */
async function streamRows(
  filePath: string,
  sniffed: { bom: boolean; delimiter: string },
  onHeader: (header: string[]) => void,
  onRows: (rows: string[][], firstRowNumber: number) => Promise<void>,
): Promise<{ sha256: string; rows: number }> {
  const check = new Utf8Check(sniffed.bom);
  const parser = parse({ delimiter: sniffed.delimiter, relax_column_count: true, skip_empty_lines: true, bom: false });
  let header: string[] | null = null;
  let buffer: string[][] = [];
  let rowNumber = 1;
  let firstOfChunk = 2;
  let rows = 0;
  const sink = new Transform({
    objectMode: true,
    transform(record: string[], _enc, done) {
      if (!header) {
        header = record;
        try {
          onHeader(record);
        } catch (err) {
          return done(err as Error);
        }
        return done();
      }
      rowNumber++;
      rows++;
      if (rows > IMPORT_LIMITS.maxRows) return done(new AppError('payload_too_large', `The file has more than ${IMPORT_LIMITS.maxRows} rows; split it`));
      buffer.push(record);
      if (buffer.length >= CHUNK) {
        const chunk = buffer;
        const first = firstOfChunk;
        buffer = [];
        firstOfChunk = rowNumber + 1;
        onRows(chunk, first).then(() => done(), done);
      } else done();
    },
    flush(done) {
      if (!header) return done(new AppError('validation_failed', 'The file is empty'));
      if (!buffer.length) return done();
      onRows(buffer, firstOfChunk).then(() => done(), done);
    },
  });
  await pipeline(fs.createReadStream(filePath, { highWaterMark: 256 * 1024 }), check, parser, sink);
  return { sha256: check.hash.digest('hex'), rows };
}

class HeaderStop extends Error {}

/** Runs a streaming pass; if it fails, waits for the write in flight to settle before the transaction rolls back. */
async function streamRowsSettled<T>(inFlight: () => Promise<void>, run: () => Promise<T>): Promise<T> {
  try {
    return await run();
  } catch (err) {
    await inFlight().catch(() => undefined);
    throw err;
  }
}

/** Like streamRows, but a header that fails its checks ends the pass early with null. */
async function streamRowsOrHeaderStop(...args: Parameters<typeof streamRows>): Promise<Awaited<ReturnType<typeof streamRows>> | null> {
  try {
    return await streamRows(...args);
  } catch (err) {
    if (err instanceof HeaderStop) return null;
    throw err;
  }
}

function readHead(filePath: string): Buffer {
  const fd = fs.openSync(filePath, 'r');
  try {
    const buf = Buffer.alloc(64 * 1024);
    const n = fs.readSync(fd, buf, 0, buf.length, 0);
    return buf.subarray(0, n);
  } finally {
    fs.closeSync(fd);
  }
}

export type ImportRequest = {
  studyId: string;
  filePath: string;
  originalName: string;
  mode: 'preview' | 'commit';
  actor: AuditActor;
  allowedSites: string[] | null;
  progressId?: string;
};

async function existingKeys(q: Pick<EntityManager, 'query'>, studyId: string): Promise<Set<string>> {
  const rows: { k: string }[] = await q.query(`SELECT import_key AS k FROM participant WHERE study_id = $1 AND import_key IS NOT NULL`, [studyId]);
  return new Set(rows.map((r) => r.k));
}

async function writeScreened(tx: EntityManager, design: StudyDesign, actor: AuditActor, rows: Extract<ParsedRow, { kind: 'screen' }>[]) {
  const entries = [];
  for (const r of rows) {
    const { eligible, failed } = evaluateEligibility(design.eligibility, r.answers);
    let p: { id: string; code: string } | undefined;
    for (let a = 0; !p && a < 5; a++) {
      const got: { id: string; code: string }[] = await tx.query(
        `INSERT INTO participant (study_id, site_id, code, status, screened_at, import_key) VALUES ($1, $2, $3, $4, now(), $5)
         ON CONFLICT (study_id, code) DO NOTHING RETURNING id, code`,
        [design.id, r.siteId, `${design.code}-${r.siteCode}-${randomCode(6)}`, eligible ? 'screened' : 'screen_failed', r.importKey],
      );
      p = got[0];
    }
    if (!p) throw new AppError('internal', 'Could not generate a unique participant code');
    await tx.query(
      `INSERT INTO screening (study_id, site_id, participant_id, screened_by, answers, eligible, failed_criteria) VALUES ($1, $2, $3, $4, $5, $6, $7)`,
      [design.id, r.siteId, p.id, actor.userId, JSON.stringify(r.answers), eligible, JSON.stringify(failed)],
    );
    entries.push({
      action: eligible ? 'participant.screened' : 'participant.screen_failed',
      entityType: 'participant',
      entityId: p.id,
      studyId: design.id,
      siteId: r.siteId,
      after: { code: p.code, site: r.siteCode, eligible, failedCriteria: failed, answers: r.answers, importKey: r.importKey },
    });
  }
  await appendAudit(tx, actor, entries);
}

/** The file's SHA-256 and its number of line breaks (a row estimate for progress), in one read. */
async function fileFacts(filePath: string): Promise<{ sha256: string; lineBreaks: number }> {
  const hash = createHash('sha256');
  let lineBreaks = 0;
  for await (const chunk of fs.createReadStream(filePath, { highWaterMark: 1024 * 1024 }) as AsyncIterable<Buffer>) {
    hash.update(chunk);
    for (let i = chunk.indexOf(10); i !== -1; i = chunk.indexOf(10, i + 1)) lineBreaks++;
  }
  return { sha256: hash.digest('hex'), lineBreaks };
}

/** Thrown inside the commit transaction when the file turns out invalid: rolls everything back and carries the report. */
class ImportRejected extends Error {
  constructor(readonly report: ImportReport) {
    super('The import has invalid rows');
  }
}

type Tally = { errors: RowError[]; seen: Set<string>; skipped: number; columns: Columns | null };

/** Checks one batch of rows; returns what to write. Duplicate references are errors, known ones are skipped. */
function checkBatch(rc: Omit<RowContext, 'columns'>, tally: Tally, known: Set<string>, rows: string[][], first: number) {
  const enroll: ValidEnrollment[] = [];
  const screened: Extract<ParsedRow, { kind: 'screen' }>[] = [];
  rows.forEach((cells, j) => {
    const rowErrors: RowError[] = [];
    const parsed = parseRow({ ...rc, columns: tally.columns! }, cells, first + j, rowErrors);
    if (parsed) {
      if (tally.seen.has(parsed.importKey)) {
        rowErrors.push({ row: first + j, field: 'participant_ref', message: `Reference '${parsed.importKey}' appears more than once in the file` });
      } else if (known.has(parsed.importKey)) tally.skipped++;
      else if (parsed.kind === 'enroll') enroll.push(parsed.value);
      else screened.push(parsed);
      tally.seen.add(parsed.importKey);
    }
    for (const e of rowErrors) tally.errors.push(e);
  });
  return { enroll, screened };
}

function reportOf(mode: ImportRequest['mode'], sniffed: { delimiter: string }, sha256: string, rows: number, tally: Tally): ImportReport {
  return {
    mode,
    fileSha256: sha256,
    delimiter: sniffed.delimiter === '\t' ? 'tab' : sniffed.delimiter,
    rowCount: rows,
    validRows: rows - new Set(tally.errors.map((e) => e.row)).size,
    errors: tally.errors.slice(0, IMPORT_LIMITS.maxErrors),
    errorsTruncated: tally.errors.length > IMPORT_LIMITS.maxErrors,
    imported: 0,
    skippedExisting: tally.skipped,
    alreadyImported: false,
    batchId: null,
  };
}

/**
 * Validates a participants CSV (preview) or imports it (commit). Commit runs the whole file
 * in one transaction, rows allocated in file order; any invalid row imports nothing. The
 * same file (SHA-256) committed twice adds nothing, and a participant_ref already imported
 * is skipped, never duplicated.
 *
 * A commit reads the file once: each batch is checked and, while every row so far is valid,
 * written (the next batch is checked while one is being written). After the first invalid row
 * nothing more is written, the rest is still checked so the report names every bad row, and
 * the transaction rolls back.
 */
export async function importParticipants(ctx: AppContext, req: ImportRequest): Promise<ImportReport> {
  const progress = (phase: 'validating' | 'writing' | 'done' | 'failed', rowsProcessed: number, totalRows: number | null) => {
    if (req.progressId) setProgress(req.progressId, req.actor.userId, { phase, rowsProcessed, totalRows });
  };
  try {
    const sniffed = sniff(readHead(req.filePath));
    const design = await loadDesign(ctx.ds, req.studyId);
    if (!design.allocation) throw new AppError('precondition_failed', 'The study design is not complete yet');
    const contextOf = (d: StudyDesign): Omit<RowContext, 'columns'> => ({
      design: d,
      delimiter: sniffed.delimiter,
      siteByCode: new Map(d.sites.map((s) => [s.code, s.id])),
      allowedSites: req.allowedSites,
      armByCode: new Map(d.arms.map((a) => [a.code, a.id])),
      today: utcToday(),
    });
    const newTally = (): Tally => ({ errors: [], seen: new Set(), skipped: 0, columns: null });
    const onHeader = (d: StudyDesign, tally: Tally) => (header: string[]) => {
      const h = checkHeader(d, header);
      if (h.errors.length) {
        tally.errors.push(...h.errors);
        throw new HeaderStop();
      }
      tally.columns = h.columns;
    };
    const headerFailed = (tally: Tally): ImportReport => {
      progress('failed', 0, null);
      return { ...reportOf(req.mode, sniffed, '', 0, tally), validRows: 0 };
    };
    const facts = await fileFacts(req.filePath);
    const committedBefore: { id: string }[] = await ctx.ds.query(
      `SELECT id FROM import_batch WHERE study_id = $1 AND file_sha256 = $2 AND status = 'committed'`,
      [req.studyId, facts.sha256],
    );

    if (req.mode === 'preview' || committedBefore[0]) {
      // Check every row and keep nothing but the errors (memory stays flat for large files).
      progress('validating', 0, null);
      const tally = newTally();
      const rc = contextOf(design);
      const known = await existingKeys(ctx.ds, req.studyId);
      let processed = 0;
      const pass = await streamRowsOrHeaderStop(req.filePath, sniffed, onHeader(design, tally), async (rows, first) => {
        checkBatch(rc, tally, known, rows, first);
        processed += rows.length;
        progress('validating', processed, null);
      });
      if (!pass) return headerFailed(tally);
      if (pass.rows === 0) throw new AppError('validation_failed', 'The file has a header but no rows');
      const report = reportOf(req.mode, sniffed, pass.sha256, pass.rows, tally);
      if (committedBefore[0]) {
        report.alreadyImported = true;
        report.batchId = committedBefore[0].id;
        report.skippedExisting = pass.rows;
      }
      progress('done', pass.rows, pass.rows);
      return report;
    }

    // Commit: one pass, inside one transaction, allocated in file order.
    const estimate = Math.max(1, facts.lineBreaks - 1);
    progress('writing', 0, estimate);
    const tally = newTally();
    try {
      const result = await inTransaction(ctx.ds, async (tx) => {
        const lockedDesign = await loadDesign(tx, req.studyId, { lock: true });
        if (!lockedDesign.allocation) throw new AppError('precondition_failed', 'The study design is not complete yet');
        const batch: { id: string }[] = await tx.query(
          `INSERT INTO import_batch (study_id, file_sha256, original_name, row_count, status, created_by, committed_at)
           VALUES ($1, $2, $3, 0, 'committed', $4, now()) ON CONFLICT DO NOTHING RETURNING id`,
          [req.studyId, facts.sha256, req.originalName, req.actor.userId],
        );
        if (!batch[0]) return null; // committed concurrently by another request
        const rc = contextOf(lockedDesign);
        const keys = await existingKeys(tx, req.studyId);
        let imported = 0;
        let checked = 0;
        // Pipeline: while one batch is being written, the next is parsed and checked (CPU and
        // database overlap on two cores). Writes stay strictly in file order, one at a time.
        let writing: Promise<void> = Promise.resolve();
        const pass = await streamRowsSettled(() => writing, () => streamRowsOrHeaderStop(req.filePath, sniffed, onHeader(lockedDesign, tally), async (rows, first) => {
          const { enroll, screened } = checkBatch(rc, tally, keys, rows, first);
          checked += rows.length;
          if (tally.errors.length) {
            progress('validating', checked, Math.max(estimate, checked));
            return;
          }
          const previous = writing;
          writing = (async () => {
            await previous;
            if (enroll.length) await enrollValidated(tx, ctx, lockedDesign, req.actor, enroll, { auditMode: 'batch', skipJob: true });
            if (screened.length) await writeScreened(tx, lockedDesign, req.actor, screened);
            imported += enroll.length + screened.length;
            progress('writing', first - 2 + rows.length, Math.max(estimate, checked));
          })();
          // Failures surface through the awaits below; this only keeps them from counting as unhandled meanwhile.
          writing.catch(() => undefined);
          // Let at most one batch wait behind the one being written (bounded memory).
          await previous;
        }));
        await writing;
        if (!pass) throw new ImportRejected(headerFailed(tally));
        if (pass.rows === 0) throw new AppError('validation_failed', 'The file has a header but no rows');
        const report = reportOf(req.mode, sniffed, pass.sha256, pass.rows, tally);
        if (tally.errors.length) throw new ImportRejected(report);
        await tx.query(`UPDATE import_batch SET row_count = $2 WHERE id = $1`, [batch[0].id, pass.rows]);
        await ctx.jobs.send(tx, 'balance.recompute', { studyId: req.studyId, reason: 'participants imported' }, { singletonKey: req.studyId });
        await appendAudit(tx, req.actor, [
          {
            action: 'import.committed',
            entityType: 'import_batch',
            entityId: batch[0].id,
            studyId: req.studyId,
            after: { fileSha256: pass.sha256, originalName: req.originalName, rows: pass.rows, imported, skippedExisting: tally.skipped },
          },
        ]);
        return { ...report, batchId: batch[0].id, imported };
      });
      if (!result) {
        // Another request committed the same file meanwhile.
        const report = reportOf(req.mode, sniffed, facts.sha256, estimate, tally);
        report.alreadyImported = true;
        report.skippedExisting = report.rowCount;
        progress('done', report.rowCount, report.rowCount);
        return report;
      }
      progress('done', result.rowCount, result.rowCount);
      return result;
    } catch (err) {
      if (!(err instanceof ImportRejected)) throw err;
      if (err.report.rowCount) progress('done', err.report.rowCount, err.report.rowCount);
      return err.report;
    }
  } catch (err) {
    progress('failed', 0, null);
    throw err;
  }
}
