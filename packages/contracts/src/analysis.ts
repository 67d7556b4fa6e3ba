import { z } from 'zod';
import { reasonSchema } from './common.js';
import { isCalendarDate } from './participants.js';

/**
 * Analysis at the end of a study: outcome values, the pre-specified ANCOVA (versioned, locked
 * with an electronic signature), and runs with their assumption checks and cautions. Shared by
 * the API and the web's Analysis tab.
 *
 * Conventions: every response carries `note` (analysisNote). A number that cannot be computed is
 * `null`, never NaN. Arm-level content is served to the unblinded statistician only.
 */

export const analysisNote =
  "Results support, and do not replace, the judgement of the study's statistician, the protocol and the applicable regulations and ethics approvals.";

/** The meaning of the lock signature (21 CFR 11.50(a)(3)); the signer confirms exactly this text. */
export const lockSignatureMeaning = 'I approve this pre-specified analysis';

const keySchema = z
  .string()
  .trim()
  .regex(/^[a-z][a-z0-9_]{0,39}$/, 'Use lower-case letters, digits and _, starting with a letter (at most 40)');

const isoDate = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'Use a date as YYYY-MM-DD');

// ---------- Specification ----------

export const specCovariateSchema = z.object({
  /** Key of one of the study's covariate definitions. */
  key: keySchema,
  /** 'linear' for continuous and binary (0/1) covariates; 'categorical' enters indicator columns. */
  form: z.enum(['linear', 'categorical']),
});
export type SpecCovariate = z.infer<typeof specCovariateSchema>;

export const analysisSpecSchema = z
  .object({
    outcome: z.object({
      key: keySchema,
      label: z.string().trim().min(1, 'Required').max(200),
      unit: z.string().trim().max(40).nullable(),
    }),
    /** The baseline value of the outcome, as a covariate (ICH E9 5.7; EMA 2015). */
    baselineCovariateKey: keySchema.nullable(),
    /** Further adjustment covariates (baseline, pre-specified). */
    covariates: z.array(specCovariateSchema).max(12),
    /** Stratification factors used at randomization enter the model (ICH E9 2.3.1). */
    includeStratificationFactors: z.boolean(),
    alpha: z.number().gt(0, 'Alpha must be above 0').max(0.2, 'Alpha must be at most 0.2'),
  })
  .superRefine((s, ctx) => {
    const seen = new Set<string>();
    s.covariates.forEach((c, i) => {
      if (seen.has(c.key)) ctx.addIssue({ code: 'custom', path: ['covariates', i, 'key'], message: `Covariate '${c.key}' is listed twice` });
      if (c.key === s.baselineCovariateKey) {
        ctx.addIssue({ code: 'custom', path: ['covariates', i, 'key'], message: `'${c.key}' is already the baseline value of the outcome` });
      }
      seen.add(c.key);
    });
  });
export type AnalysisSpec = z.infer<typeof analysisSpecSchema>;

export const specPutBodySchema = z.object({
  spec: analysisSpecSchema,
  /** Required once a specification exists (every edit after the first entry). */
  reason: reasonSchema.optional(),
});
export type SpecPutBody = z.infer<typeof specPutBodySchema>;

export const lockBodySchema = z.object({
  /** The version the signer has in front of them; a different current version is a conflict. */
  version: z.number().int().positive(),
  /** Second signature component besides the session (21 CFR 11.200(a)(1)). */
  password: z.string().min(1, 'Enter your password to sign').max(200),
  meaning: z.literal(lockSignatureMeaning, { message: `Confirm the meaning: "${lockSignatureMeaning}"` }),
});
export type LockBody = z.infer<typeof lockBodySchema>;

export const signatureSchema = z.object({
  signerName: z.string(),
  signerEmail: z.string(),
  /** UTC ISO time of signing. */
  signedAt: z.string(),
  meaning: z.string(),
  contentSha256: z.string(),
});
export type Signature = z.infer<typeof signatureSchema>;

export const specDtoSchema = z.object({
  id: z.uuid(),
  version: z.number().int(),
  status: z.enum(['draft', 'locked']),
  spec: analysisSpecSchema,
  createdAt: z.string(),
  updatedAt: z.string(),
  signature: signatureSchema.nullable(),
});
export type SpecDto = z.infer<typeof specDtoSchema>;

export const cautionSchema = z.object({
  /** DOMAIN caution number (3-10), or 0 for data notes. */
  number: z.number().int(),
  code: z.string(),
  severity: z.enum(['blocked', 'warning', 'info']),
  title: z.string(),
  message: z.string(),
  source: z.string(),
});
export type Caution = z.infer<typeof cautionSchema>;

export const specContextCovariateSchema = z.object({
  key: z.string(),
  label: z.string(),
  kind: z.enum(['continuous', 'binary', 'categorical']),
  unit: z.string().nullable(),
  isStratification: z.boolean(),
  isAdjustment: z.boolean(),
  isOutcomeBaseline: z.boolean(),
  reliability: z.number().nullable(),
  /** Values measured after the participant's randomization (trial) or enrollment (cohort). */
  measuredAfterRandomization: z.number().int(),
  recorded: z.number().int(),
});

export const completenessSchema = z.object({
  outcomeKey: z.string(),
  /** Participants counted (intention to treat: enrolled and withdrawn). */
  eligible: z.number().int(),
  recorded: z.number().int(),
  missing: z.number().int(),
  bySite: z.array(z.object({ siteCode: z.string(), siteName: z.string(), eligible: z.number().int(), recorded: z.number().int() })),
});
export type Completeness = z.infer<typeof completenessSchema>;

export const specResponseSchema = z.object({
  current: specDtoSchema.nullable(),
  versions: z.array(z.object({ version: z.number().int(), status: z.enum(['draft', 'locked']), updatedAt: z.string(), signature: signatureSchema.nullable() })),
  firstLockedVersion: z.number().int().nullable(),
  /** The next run on the current version is exploratory and needs a reason (caution 3). */
  nextRunExploratory: z.boolean(),
  context: z.object({
    studyKind: z.enum(['randomized_trial', 'observational_cohort']),
    covariates: z.array(specContextCovariateSchema),
    stratificationFactors: z.array(z.object({ key: z.string(), label: z.string() })),
    eligibilityThresholds: z.array(z.object({ id: z.string(), label: z.string(), field: z.string(), op: z.string(), value: z.unknown() })),
    itt: z.number().int(),
  }),
  /** A starting point built from the study's design, for a study with no specification yet. */
  suggestion: analysisSpecSchema,
  cautions: z.array(cautionSchema),
  completeness: completenessSchema.nullable(),
  note: z.string(),
});
export type SpecResponse = z.infer<typeof specResponseSchema>;

// ---------- Outcomes ----------

export const outcomeRowSchema = z.object({
  participantCode: z.string().trim().min(1, 'Enter the participant code').max(60, 'A participant code has at most 60 characters'),
  value: z.number({ message: 'Enter the value as a number' }).refine(Number.isFinite, 'Must be a finite number'),
  // A real calendar day: PostgreSQL would refuse 2026-02-30 with a server error.
  measuredOn: isoDate.refine(isCalendarDate, { message: 'Not a real calendar date' }),
});
export type OutcomeRow = z.infer<typeof outcomeRowSchema>;

export const outcomesPutBodySchema = z.object({
  outcomeKey: keySchema,
  rows: z.array(outcomeRowSchema).min(1, 'Send at least one row').max(5000, 'At most 5000 rows per request'),
  /** Required when any row changes a value already recorded. */
  reason: reasonSchema.optional(),
});
export type OutcomesPutBody = z.infer<typeof outcomesPutBodySchema>;

export const outcomesPutResponseSchema = z.object({
  outcomeKey: z.string(),
  created: z.number().int(),
  corrected: z.number().int(),
  unchanged: z.number().int(),
  note: z.string(),
});
export type OutcomesPutResponse = z.infer<typeof outcomesPutResponseSchema>;

/**
 * What the same rows would do, from `POST .../outcomes/check`: every row is checked as a PUT
 * would check it and nothing is written. `corrected` > 0 means the PUT will need a reason.
 */
export const outcomesCheckResponseSchema = outcomesPutResponseSchema;
export type OutcomesCheckResponse = OutcomesPutResponse;

/**
 * What outcome entry needs to know, for everyone who may record outcomes (site staff see their
 * own sites only): the outcome the current specification names, and how complete it is.
 * Nothing here depends on an arm.
 */
export const outcomesOverviewSchema = z.object({
  /** Named by the current specification version; null while the study has no specification. */
  outcome: z.object({ key: z.string(), label: z.string(), unit: z.string().nullable() }).nullable(),
  specVersion: z.number().int().nullable(),
  specStatus: z.enum(['draft', 'locked']).nullable(),
  /** For site staff, only their own sites (and totals over them). */
  completeness: completenessSchema.nullable(),
  note: z.string(),
});
export type OutcomesOverview = z.infer<typeof outcomesOverviewSchema>;

// ---------- Runs ----------

export const runBodySchema = z.object({
  /** Defaults to the current version. */
  specVersion: z.number().int().positive().optional(),
  /** Required when the run is exploratory (caution 3). */
  reason: reasonSchema.optional(),
});
export type RunBody = z.infer<typeof runBodySchema>;

const num = z.number();
const nNum = z.number().nullable();

export const anovaRowSchema = z.object({ source: z.string(), label: z.string(), df: num, ss: num, ms: nNum, f: nNum, p: nNum, partialEtaSquared: nNum });
export type AnovaRow = z.infer<typeof anovaRowSchema>;

export const armLabelSchema = z.object({ armId: z.uuid(), code: z.string(), name: z.string() });

export const checkSchema = z.object({
  id: z.enum(['independence', 'normality', 'variance', 'sd_ratio', 'linearity', 'slopes']),
  title: z.string(),
  status: z.enum(['pass', 'attention', 'recorded', 'review', 'not_computed']),
  summary: z.string(),
  /** The rule's source, or "common practice". */
  source: z.string(),
});
export type AssumptionCheck = z.infer<typeof checkSchema>;

export const runResultSchema = z.object({
  specVersion: z.number().int(),
  spec: analysisSpecSchema,
  exploratory: z.boolean(),
  reason: z.string().nullable(),
  studyKind: z.enum(['randomized_trial', 'observational_cohort']),
  alpha: num,
  confidenceLevel: num,
  data: z.object({
    itt: z.number().int(),
    analysed: z.number().int(),
    missingOutcome: z.number().int(),
    missingCovariate: z.number().int(),
    method: z.string(),
  }),
  model: z.object({
    terms: z.array(z.object({ key: z.string(), label: z.string(), role: z.enum(['baseline_outcome', 'adjustment', 'stratification']), columns: z.array(z.string()) })),
    blocked: z.array(z.object({ key: z.string(), label: z.string(), valuesAfterRandomization: z.number().int() })),
    parameters: z.number().int(),
    description: z.string(),
  }),
  groups: z.array(armLabelSchema.extend({ n: z.number().int(), mean: num, sd: nNum })),
  unadjusted: z.object({ rows: z.array(anovaRowSchema), errorMeanSquare: num }),
  adjusted: z.object({ rows: z.array(anovaRowSchema), errorMeanSquare: num, rSquared: num }),
  /** Adjusted over unadjusted error mean square. */
  errorMeanSquareRatio: num,
  groupEffect: z.object({ unadjusted: z.object({ f: num, p: num }), adjusted: z.object({ f: num, p: num, partialEtaSquared: num }) }),
  adjustedMeans: z.array(armLabelSchema.extend({ n: z.number().int(), mean: num, se: num, lower: num, upper: num, rawMean: num })),
  differences: z.array(z.object({ a: z.string(), b: z.string(), label: z.string(), difference: num, se: num, lower: num, upper: num, p: num })),
  slopes: z.array(z.object({ column: z.string(), label: z.string(), estimate: num, se: num, lower: num, upper: num, p: num })),
  partition: z.array(z.object({ source: z.string(), label: z.string(), ss: num, share: num })),
  robust: z.object({ method: z.string(), f: num, df1: num, df2: num, p: num }).nullable(),
  checks: z.array(checkSchema),
  normality: z.object({
    shapiroWilk: z.object({ w: num, p: num }).nullable(),
    skewness: nNum,
    excessKurtosis: nNum,
    residualSd: num,
    qq: z.array(z.object({ theoretical: num, sample: num })),
    histogram: z.array(z.object({ from: num, to: num, count: z.number().int() })),
  }),
  levene: z.object({ statistic: num, df1: num, df2: num, p: num, center: z.string() }).nullable(),
  sdRatio: z.object({ ratio: num, flagged: z.boolean(), threshold: num, sds: z.array(z.object({ code: z.string(), sd: num })) }).nullable(),
  slopeHomogeneity: z
    .object({ f: num, df1: num, df2: num, p: num, covariates: z.array(z.string()), groupSlopes: z.array(z.object({ code: z.string(), covariate: z.string(), slope: num })) })
    .nullable(),
  linearity: z
    .object({
      covariate: z.object({ key: z.string(), label: z.string(), unit: z.string().nullable() }),
      totalPoints: z.number().int(),
      downsampled: z.boolean(),
      groups: z.array(
        z.object({
          code: z.string(),
          name: z.string(),
          points: z.array(z.tuple([num, num])),
          withinGroupLine: z.object({ intercept: num, slope: num }).nullable(),
          commonSlopeLine: z.object({ intercept: num, slope: num }),
          xMin: num,
          xMax: num,
        }),
      ),
    })
    .nullable(),
  changeScore: z
    .object({
      baselineKey: z.string(),
      groups: z.array(z.object({ code: z.string(), n: z.number().int(), meanChange: num, sd: nNum })),
      difference: z.object({ a: z.string(), b: z.string(), estimate: num, se: num, lower: num, upper: num, p: num }),
      ancovaDifference: num,
      baselineSmd: nNum,
      explanation: z.string(),
    })
    .nullable(),
  cautions: z.array(cautionSchema),
  note: z.string(),
});
export type RunResult = z.infer<typeof runResultSchema>;

export const runDtoSchema = z.object({
  id: z.uuid(),
  specVersion: z.number().int(),
  exploratory: z.boolean(),
  reason: z.string().nullable(),
  runAt: z.string(),
  runBy: z.object({ name: z.string(), email: z.string() }),
  result: runResultSchema,
});
export type RunDto = z.infer<typeof runDtoSchema>;

export const runResponseSchema = z.object({ run: runDtoSchema, note: z.string() });

export const runListSchema = z.object({
  runs: z.array(
    z.object({
      id: z.uuid(),
      specVersion: z.number().int(),
      exploratory: z.boolean(),
      reason: z.string().nullable(),
      runAt: z.string(),
      runByName: z.string(),
      analysed: z.number().int(),
      groupF: num,
      groupP: num,
    }),
  ),
  note: z.string(),
});
export type RunList = z.infer<typeof runListSchema>;
