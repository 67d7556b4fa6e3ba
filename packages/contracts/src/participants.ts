import { z } from 'zod';
import { reasonSchema } from './common.js';
import type { CriterionOp, EligibilityCriterion } from './design.js';

/**
 * Screening, enrollment, corrections and withdrawal. The baseline part of the enrollment form
 * is generated from the study's covariate definitions by `buildBaselineSchema`, and the web
 * and the API run the very same schema.
 */

/**
 * Whether a YYYY-MM-DD text names a real day of the proleptic Gregorian calendar (ISO 8601):
 * month 1-12, day within the month, 29 February only in leap years (divisible by 4, except
 * centuries not divisible by 400). Arithmetic, not Date parsing: imports check a million dates.
 */
export function isCalendarDate(s: string): boolean {
  const y = Number(s.slice(0, 4));
  const m = Number(s.slice(5, 7));
  const d = Number(s.slice(8, 10));
  if (!(m >= 1 && m <= 12 && d >= 1)) return false;
  const leap = (y % 4 === 0 && y % 100 !== 0) || y % 400 === 0;
  const days = m === 2 ? (leap ? 29 : 28) : m === 4 || m === 6 || m === 9 || m === 11 ? 30 : 31;
  return d <= days;
}

export const isoDateSchema = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}$/, 'Use a date like 2026-03-14')
  .refine(isCalendarDate, { message: 'Not a real calendar date' });

/** The calendar date in UTC, as the API uses it for "today". */
export const utcToday = (now = new Date()): string => now.toISOString().slice(0, 10);

const DAY_MS = 86_400_000;
export const addDays = (isoDate: string, days: number): string =>
  new Date(Date.parse(`${isoDate}T00:00:00Z`) + days * DAY_MS).toISOString().slice(0, 10);

/** What `buildBaselineSchema` needs of a covariate definition (the design input and the DTO both fit). */
export type BaselineCovariate = {
  key: string;
  label: string;
  kind: 'continuous' | 'binary' | 'categorical';
  unit?: string | null;
  min?: number | null;
  max?: number | null;
  decimals?: number | null;
  levels?: string[] | null;
  required: boolean;
  windowDaysBefore: number;
  windowDaysAfter: number;
};

export type BaselineSchemaOptions = {
  /** The enrollment date the collection window is measured from (YYYY-MM-DD). */
  enrollmentDate: string;
  /** Today (YYYY-MM-DD); a measurement date after it is rejected. Defaults to the UTC date. */
  today?: string;
  /** Corrections: every covariate becomes optional, only the ones sent are checked. */
  partial?: boolean;
};

export type BaselineValue = number | boolean | string;
export type BaselineEntry = { value: BaselineValue; measuredOn: string };

const fmt = (n: number) => String(n);

function hasAtMostDecimals(v: number, decimals: number): boolean {
  const scaled = v * 10 ** decimals;
  return Math.abs(scaled - Math.round(scaled)) <= 1e-9 * Math.max(1, Math.abs(scaled));
}

function valueSchema(c: BaselineCovariate): z.ZodType<BaselineValue> {
  const unit = c.unit ? ` ${c.unit}` : '';
  if (c.kind === 'continuous') {
    const min = c.min ?? Number.NEGATIVE_INFINITY;
    const max = c.max ?? Number.POSITIVE_INFINITY;
    const decimals = c.decimals ?? 0;
    return z
      .number({ error: `${c.label} must be a number` })
      .refine((v) => Number.isFinite(v), { message: `${c.label} must be a number` })
      .refine((v) => v >= min && v <= max, {
        message: `${c.label} must be between ${fmt(min)} and ${fmt(max)}${unit}`,
      })
      .refine((v) => hasAtMostDecimals(v, decimals), {
        message:
          decimals === 0
            ? `${c.label} must be a whole number`
            : `${c.label} allows at most ${decimals} decimal place${decimals === 1 ? '' : 's'}`,
      });
  }
  if (c.kind === 'binary') return z.boolean({ error: `${c.label} must be yes or no` });
  const levels = c.levels ?? [];
  return z.string({ error: `${c.label}: choose one of ${levels.join(', ')}` }).refine((v) => levels.includes(v), {
    message: `${c.label}: choose one of ${levels.join(', ')}`,
  });
}

function entrySchema(c: BaselineCovariate, opts: BaselineSchemaOptions) {
  const today = opts.today ?? utcToday();
  const earliest = addDays(opts.enrollmentDate, -c.windowDaysBefore);
  const latest = addDays(opts.enrollmentDate, c.windowDaysAfter);
  return z.object(
    {
      value: valueSchema(c),
      measuredOn: isoDateSchema
        .refine((d) => d <= today, { message: `${c.label}: the measurement date is in the future` })
        .refine((d) => d >= earliest, {
          message: `${c.label}: measured more than ${c.windowDaysBefore} days before enrollment (${opts.enrollmentDate}); the window opens ${earliest}`,
        })
        .refine((d) => d <= latest, {
          message:
            c.windowDaysAfter === 0
              ? `${c.label}: measured after the enrollment date (${opts.enrollmentDate})`
              : `${c.label}: measured more than ${c.windowDaysAfter} days after enrollment; the window closes ${latest}`,
        }),
    },
    { error: `${c.label} is required` },
  );
}

/**
 * The zod schema of the baseline values of one enrollment, generated from the covariate
 * definitions: ranges, decimals, levels, required, and the measurement date (not in the
 * future, inside the collection window around the enrollment date). Unknown keys are refused.
 */
export function buildBaselineSchema(covariates: readonly BaselineCovariate[], opts: BaselineSchemaOptions) {
  const shape: Record<string, z.ZodType> = {};
  for (const c of covariates) {
    const entry = entrySchema(c, opts);
    shape[c.key] = opts.partial || !c.required ? entry.nullish() : entry;
  }
  return z.strictObject(shape, { error: (iss) => (iss.code === 'unrecognized_keys' ? 'Unknown covariate' : undefined) });
}
export type BaselineValues = Record<string, BaselineEntry | null | undefined>;

export const consentSchema = z.object({ date: isoDateSchema, version: z.string().trim().min(1, 'Required').max(60) });

export const screeningAnswerSchema = z.union([z.number(), z.string().max(200), z.boolean()]);
export const screeningBodySchema = z.object({
  siteId: z.uuid(),
  /** Answers keyed by covariate key or screening question key. */
  answers: z.record(z.string().regex(/^[a-z][a-z0-9_]{0,39}$/), screeningAnswerSchema),
});
export type ScreeningBody = z.infer<typeof screeningBodySchema>;

export type CriterionResult = { id: string; kind: 'inclusion' | 'exclusion'; label: string; reason: string };

function compare(op: CriterionOp, a: unknown, b: unknown): boolean {
  if (op === 'in') return Array.isArray(b) && b.some((x) => x === a);
  if (op === '==') return a === b;
  if (op === '!=') return a !== b;
  if (typeof a !== 'number' || typeof b !== 'number') return false;
  if (op === '>=') return a >= b;
  if (op === '<=') return a <= b;
  if (op === '>') return a > b;
  return a < b;
}

/**
 * Evaluates eligibility: an inclusion rule must hold, an exclusion rule must not. A missing
 * answer fails the rule (one cannot be included on an unknown value).
 */
export function evaluateEligibility(
  criteria: readonly EligibilityCriterion[],
  answers: Readonly<Record<string, unknown>>,
): { eligible: boolean; failed: CriterionResult[] } {
  const failed: CriterionResult[] = [];
  for (const c of criteria) {
    const answer = answers[c.field];
    if (answer === undefined || answer === null || answer === '') {
      failed.push({ id: c.id, kind: c.kind, label: c.label, reason: `No answer for '${c.field}'` });
      continue;
    }
    const holds = compare(c.op, answer, c.value);
    if (c.kind === 'inclusion' && !holds) {
      failed.push({ id: c.id, kind: c.kind, label: c.label, reason: `Inclusion not met: ${c.field} ${c.op} ${JSON.stringify(c.value)}` });
    }
    if (c.kind === 'exclusion' && holds) {
      failed.push({ id: c.id, kind: c.kind, label: c.label, reason: `Exclusion applies: ${c.field} ${c.op} ${JSON.stringify(c.value)}` });
    }
  }
  return { eligible: failed.length === 0, failed };
}

/** Baseline entries as sent on the wire; the generated schema checks them against the design. */
export const baselineEntryWireSchema = z.object({ value: z.union([z.number(), z.boolean(), z.string()]), measuredOn: z.string() });

export const enrollBodySchema = z.object({
  siteId: z.uuid(),
  /** The eligible screening this enrollment follows, if it was screened through the API. */
  screeningId: z.uuid().optional(),
  consent: consentSchema,
  baseline: z.record(z.string(), baselineEntryWireSchema.nullable()),
  /** Answers to screening questions that are not covariates (used for eligibility when no screeningId). */
  screeningAnswers: z.record(z.string(), screeningAnswerSchema).optional(),
  /** Observational cohorts only: the exposure group, recorded rather than allocated. */
  exposureArmId: z.uuid().optional(),
});
export type EnrollBody = z.infer<typeof enrollBodySchema>;

export const participantPatchBodySchema = z.discriminatedUnion('action', [
  z.object({
    action: z.literal('correct'),
    reason: reasonSchema,
    /** Only the covariates being corrected; each with its value and measurement date. */
    baseline: z.record(z.string(), baselineEntryWireSchema).optional(),
    consent: consentSchema.optional(),
  }),
  z.object({ action: z.literal('withdraw'), reason: reasonSchema }),
]);
export type ParticipantPatchBody = z.infer<typeof participantPatchBodySchema>;

export const unblindBodySchema = z.object({ reason: reasonSchema });

export const participantStatusSchema = z.enum(['screened', 'screen_failed', 'enrolled', 'withdrawn']);
export type ParticipantStatus = z.infer<typeof participantStatusSchema>;

export const participantSortSchema = z.enum([
  'code',
  '-code',
  'enrolledAt',
  '-enrolledAt',
  'status',
  '-status',
  'site',
  '-site',
]);
export const participantListQuerySchema = z.object({
  sort: participantSortSchema.default('-enrolledAt'),
  siteId: z.uuid().optional(),
  status: participantStatusSchema.optional(),
  /** Case-insensitive search in the participant code. */
  q: z.string().trim().max(40).optional(),
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(25),
});
export type ParticipantListQuery = z.infer<typeof participantListQuerySchema>;

export const armRefSchema = z.object({ id: z.uuid(), code: z.string(), name: z.string() });

/** The allocation as the reader may see it: the arm only where the role may know it. */
export const allocationDtoSchema = z.object({
  kitCode: z.string(),
  allocatedAt: z.string(),
  arm: armRefSchema.optional(),
});

export const participantSummarySchema = z.object({
  id: z.uuid(),
  code: z.string(),
  siteId: z.uuid(),
  siteCode: z.string(),
  status: participantStatusSchema,
  screenedAt: z.string().nullable(),
  enrolledAt: z.string().nullable(),
  withdrawnAt: z.string().nullable(),
  kitCode: z.string().nullable(),
  /** Present only for readers who may see arms. */
  arm: armRefSchema.optional(),
});
export type ParticipantSummary = z.infer<typeof participantSummarySchema>;

export const participantListSchema = z.object({
  items: z.array(participantSummarySchema),
  total: z.number().int(),
  page: z.number().int(),
  pageSize: z.number().int(),
});

export const historyEntrySchema = z.object({
  seq: z.number().int(),
  occurredAt: z.string(),
  actorEmail: z.string().nullable(),
  actorRole: z.string().nullable(),
  action: z.string(),
  before: z.unknown(),
  after: z.unknown(),
  reason: z.string().nullable(),
});

export const consentDocumentDtoSchema = z.object({
  id: z.uuid(),
  originalName: z.string(),
  mediaType: z.string(),
  sizeBytes: z.number().int(),
  sha256: z.string(),
  uploadedAt: z.string(),
});
export type ConsentDocumentDto = z.infer<typeof consentDocumentDtoSchema>;

export const participantDetailSchema = participantSummarySchema.extend({
  consentDate: z.string().nullable(),
  consentVersion: z.string().nullable(),
  withdrawalReason: z.string().nullable(),
  baseline: z.record(z.string(), z.object({ value: z.union([z.number(), z.boolean(), z.string()]), measuredOn: z.string() })),
  allocation: allocationDtoSchema.nullable(),
  consentDocuments: z.array(consentDocumentDtoSchema),
  history: z.array(historyEntrySchema),
});
export type ParticipantDetail = z.infer<typeof participantDetailSchema>;

export const enrollResponseSchema = z.object({
  participant: participantSummarySchema,
  allocation: allocationDtoSchema.nullable(),
});
export type EnrollResponse = z.infer<typeof enrollResponseSchema>;

export const screeningDtoSchema = z.object({
  id: z.uuid(),
  siteId: z.uuid(),
  siteCode: z.string(),
  screenedAt: z.string(),
  screenedBy: z.string().nullable(),
  eligible: z.boolean(),
  failedCriteria: z.array(z.object({ id: z.string(), kind: z.string(), label: z.string(), reason: z.string() })),
  participant: z.object({ id: z.uuid(), code: z.string() }).nullable(),
});
export type ScreeningDto = z.infer<typeof screeningDtoSchema>;
export const screeningListQuerySchema = z.object({
  siteId: z.uuid().optional(),
  eligible: z.enum(['true', 'false']).optional(),
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(50),
});
export const screeningListSchema = z.object({ items: z.array(screeningDtoSchema), total: z.number().int() });

export const unblindResponseSchema = z.object({ participantId: z.uuid(), arm: armRefSchema, unblindedAt: z.string(), notified: z.number().int() });

export const importModeSchema = z.object({
  mode: z.enum(['preview', 'commit']).default('preview'),
  /** A client-chosen id to poll `GET .../participants/import/progress/:progressId` while the file is processed. */
  progressId: z.string().regex(/^[A-Za-z0-9_-]{8,64}$/).optional(),
});
export const importRowErrorSchema = z.object({ row: z.number().int(), field: z.string(), message: z.string() });
export const importReportSchema = z.object({
  mode: z.enum(['preview', 'commit']),
  fileSha256: z.string(),
  delimiter: z.string(),
  rowCount: z.number().int(),
  validRows: z.number().int(),
  /** Per-row, per-field problems, in plain words; capped (see `errorsTruncated`). */
  errors: z.array(importRowErrorSchema),
  errorsTruncated: z.boolean(),
  imported: z.number().int(),
  skippedExisting: z.number().int(),
  alreadyImported: z.boolean(),
  batchId: z.uuid().nullable(),
});
export type ImportReport = z.infer<typeof importReportSchema>;
export const importProgressSchema = z.object({
  phase: z.enum(['receiving', 'validating', 'writing', 'done', 'failed']),
  rowsProcessed: z.number().int(),
  totalRows: z.number().int().nullable(),
});
export type ImportProgress = z.infer<typeof importProgressSchema>;
