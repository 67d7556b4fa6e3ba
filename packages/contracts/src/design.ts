import { z } from 'zod';
import { reasonSchema } from './common.js';
import { blindingSchema, studyKindSchema, studyStatusSchema } from './studies.js';

/**
 * Study design: arms, sites, covariate definitions, eligibility criteria, allocation scheme
 * and alert rules. The statistician (or an administrator) writes it with
 * `PUT /api/studies/:studyId/design`; every save is a new design version.
 */

const codeSchema = z
  .string()
  .trim()
  .regex(/^[A-Z][A-Z0-9_]{0,19}$/, 'Use 1-20 capital letters, digits or _, starting with a letter');
const keySchema = z
  .string()
  .trim()
  .regex(/^[a-z][a-z0-9_]{0,39}$/, 'Use 1-40 lower-case letters, digits or _, starting with a letter');
const labelSchema = z.string().trim().min(1, 'Required').max(200);

export const studyCreateBodySchema = z.object({
  code: codeSchema,
  title: z.string().trim().min(3, 'Give a title of at least 3 characters').max(300),
  kind: studyKindSchema,
  blinding: blindingSchema,
  targetSampleSize: z.number().int().min(2).max(1_000_000),
});
export type StudyCreateBody = z.infer<typeof studyCreateBodySchema>;

export const armInputSchema = z.object({
  code: codeSchema,
  name: labelSchema,
  /** Relative allocation weight, e.g. 2 and 1 for a 2:1 ratio. */
  ratio: z.number().int().min(1).max(10).default(1),
});
export type ArmInput = z.infer<typeof armInputSchema>;

export const siteStatusSchema = z.enum(['active', 'paused', 'closed']);
export const siteInputSchema = z.object({
  code: codeSchema,
  name: labelSchema,
  enrollmentTarget: z.number().int().min(0).max(1_000_000),
  status: siteStatusSchema.default('active'),
});
export type SiteInput = z.infer<typeof siteInputSchema>;

const covariateCommon = {
  key: keySchema,
  label: labelSchema,
  required: z.boolean().default(true),
  /** Measurement must fall between enrollment date minus `windowDaysBefore` and plus `windowDaysAfter`. */
  windowDaysBefore: z.number().int().min(0).max(3650).default(30),
  windowDaysAfter: z.number().int().min(0).max(365).default(0),
  isStratification: z.boolean().default(false),
  isAdjustment: z.boolean().default(false),
  isOutcomeBaseline: z.boolean().default(false),
  /** Test-retest or inter-rater reliability in (0, 1], where known (DOMAIN.md caution 9). */
  reliability: z.number().gt(0).max(1).nullable().optional(),
};

export const continuousCovariateSchema = z
  .object({
    ...covariateCommon,
    kind: z.literal('continuous'),
    unit: z.string().trim().max(40).default(''),
    min: z.number().finite(),
    max: z.number().finite(),
    decimals: z.number().int().min(0).max(6).default(0),
  })
  .refine((c) => c.min < c.max, { message: 'The minimum must be below the maximum', path: ['max'] });

export const binaryCovariateSchema = z.object({ ...covariateCommon, kind: z.literal('binary') });

export const categoricalCovariateSchema = z
  .object({
    ...covariateCommon,
    kind: z.literal('categorical'),
    levels: z.array(z.string().trim().min(1).max(60)).min(2, 'Give at least two levels').max(30),
  })
  .refine((c) => new Set(c.levels).size === c.levels.length, { message: 'Levels must be distinct', path: ['levels'] });

export const covariateDefinitionSchema = z.discriminatedUnion('kind', [
  continuousCovariateSchema,
  binaryCovariateSchema,
  categoricalCovariateSchema,
]);
export type CovariateDefinition = z.infer<typeof covariateDefinitionSchema>;
export type CovariateDefinitionInput = z.input<typeof covariateDefinitionSchema>;

/** Questions asked at screening that are not baseline covariates (e.g. "able to walk unaided"). */
export const screeningQuestionSchema = z.object({
  key: keySchema,
  label: labelSchema,
  kind: z.enum(['binary', 'number', 'choice']),
  levels: z.array(z.string().trim().min(1).max(60)).max(30).optional(),
});
export type ScreeningQuestion = z.infer<typeof screeningQuestionSchema>;

export const criterionOpSchema = z.enum(['>=', '<=', '>', '<', '==', '!=', 'in']);
export type CriterionOp = z.infer<typeof criterionOpSchema>;
const criterionValueSchema = z.union([z.number(), z.string(), z.boolean(), z.array(z.union([z.number(), z.string()]))]);

/**
 * An eligibility rule over a covariate key or a screening question key. An inclusion rule
 * must hold; an exclusion rule excludes when it holds.
 */
export const eligibilityCriterionSchema = z
  .object({
    id: z.string().trim().regex(/^[A-Za-z0-9_-]{1,40}$/, 'Use letters, digits, _ or -'),
    kind: z.enum(['inclusion', 'exclusion']),
    label: labelSchema,
    field: keySchema,
    op: criterionOpSchema,
    value: criterionValueSchema,
  })
  .refine((c) => (c.op === 'in') === Array.isArray(c.value), {
    message: "Use a list of values with 'in', and a single value otherwise",
    path: ['value'],
  });
export type EligibilityCriterion = z.infer<typeof eligibilityCriterionSchema>;

export const permutedBlocksSchema = z.object({
  method: z.literal('permuted_blocks'),
  /** Block sizes mixed at random; each must be a multiple of the sum of the arm ratios. */
  blockSizes: z.array(z.number().int().min(2).max(24)).min(1).max(6),
  stratifyBySite: z.boolean(),
});
export const minimizationSchema = z.object({
  method: z.literal('minimization'),
  /** Covariate keys (binary or categorical), optionally 'site'. */
  factors: z.array(z.string().regex(/^[a-z][a-z0-9_]{0,39}$/)).min(1).max(6),
  /** One weight per factor, in the same order. */
  weights: z.array(z.number().positive().max(100)),
  /** Probability of giving the arm that minimises imbalance; below 1 keeps it random (ICH E9). */
  probability: z.number().gt(0.5).lt(1),
  imbalance: z.enum(['range', 'variance']),
});
export const exposureRecordedSchema = z.object({
  method: z.literal('exposure_recorded'),
  weighting: z.object({ estimand: z.enum(['ATE', 'ATT', 'overlap']) }),
});
export const allocationSchemeSchema = z.discriminatedUnion('method', [
  permutedBlocksSchema,
  minimizationSchema,
  exposureRecordedSchema,
]);
export type AllocationScheme = z.infer<typeof allocationSchemeSchema>;

export const alertRulesSchema = z.object({
  smdThreshold: z.number().positive().max(2).default(0.1),
  varianceRatio: z.tuple([z.number().positive(), z.number().positive()]).default([0.5, 2]),
  chanceAware: z.boolean().default(true),
  minPerArmForSiteAlerts: z.number().int().min(1).max(10_000).default(10),
  /**
   * Which rules also alert per site. By default only the chance-aware one: at the size of a
   * site a fixed |SMD| threshold is crossed by chance most of the time (with 50 per arm about
   * 62% for 0.1), so per-site threshold alerts would mostly report noise (DOMAIN caution 11).
   */
  siteRules: z
    .array(z.enum(['smd_threshold', 'variance_ratio', 'smd_beyond_chance']))
    .default(['smd_beyond_chance']),
});
export type AlertRules = z.infer<typeof alertRulesSchema>;
export const defaultAlertRules: AlertRules = {
  smdThreshold: 0.1,
  varianceRatio: [0.5, 2],
  chanceAware: true,
  minPerArmForSiteAlerts: 10,
  siteRules: ['smd_beyond_chance'],
};

const STRATUM_KINDS = new Set(['binary', 'categorical']);

/** The body of `PUT /api/studies/:studyId/design`. `reason` is required once anyone is enrolled (checked by the API). */
export const designBodySchema = z
  .object({
    targetSampleSize: z.number().int().min(2).max(1_000_000),
    arms: z.array(armInputSchema).min(2, 'A study needs at least two arms').max(8),
    sites: z.array(siteInputSchema).min(1, 'Add at least one site').max(500),
    covariates: z.array(covariateDefinitionSchema).max(100),
    screeningQuestions: z.array(screeningQuestionSchema).max(50).default([]),
    eligibility: z.array(eligibilityCriterionSchema).max(100).default([]),
    allocation: allocationSchemeSchema,
    alertRules: alertRulesSchema.default(defaultAlertRules),
    reason: reasonSchema.optional(),
  })
  .superRefine((d, ctx) => {
    const dup = <T>(items: T[], key: (t: T) => string, path: string, what: string) => {
      const seen = new Set<string>();
      items.forEach((it, i) => {
        const k = key(it);
        if (seen.has(k)) ctx.addIssue({ code: 'custom', path: [path, i], message: `Duplicate ${what} '${k}'` });
        seen.add(k);
      });
    };
    dup(d.arms, (a) => a.code, 'arms', 'arm code');
    dup(d.sites, (s) => s.code, 'sites', 'site code');
    dup([...d.covariates, ...d.screeningQuestions], (c) => c.key, 'covariates', 'key');
    dup(d.eligibility, (c) => c.id, 'eligibility', 'criterion id');

    const fields = new Set([...d.covariates.map((c) => c.key), ...d.screeningQuestions.map((q) => q.key)]);
    d.eligibility.forEach((c, i) => {
      if (!fields.has(c.field)) {
        ctx.addIssue({ code: 'custom', path: ['eligibility', i, 'field'], message: `No covariate or screening question '${c.field}'` });
      }
    });
    d.covariates.forEach((c, i) => {
      if (c.isStratification && !STRATUM_KINDS.has(c.kind)) {
        ctx.addIssue({
          code: 'custom',
          path: ['covariates', i, 'isStratification'],
          message: 'Only binary or categorical covariates can stratify (do not dichotomise a continuous covariate)',
        });
      }
      if (c.isStratification && !c.required) {
        ctx.addIssue({ code: 'custom', path: ['covariates', i, 'required'], message: 'A stratification factor must be required' });
      }
    });

    const a = d.allocation;
    if (a.method === 'permuted_blocks') {
      const ratioSum = d.arms.reduce((s, x) => s + x.ratio, 0);
      a.blockSizes.forEach((b, i) => {
        if (b % ratioSum !== 0) {
          ctx.addIssue({
            code: 'custom',
            path: ['allocation', 'blockSizes', i],
            message: `Block size ${b} is not a multiple of the arm ratios' sum (${ratioSum})`,
          });
        }
      });
    }
    if (a.method === 'minimization') {
      if (a.weights.length !== a.factors.length) {
        ctx.addIssue({ code: 'custom', path: ['allocation', 'weights'], message: 'Give one weight per factor' });
      }
      const byKey = new Map(d.covariates.map((c) => [c.key, c]));
      a.factors.forEach((f, i) => {
        if (f === 'site') return;
        const c = byKey.get(f);
        if (!c) ctx.addIssue({ code: 'custom', path: ['allocation', 'factors', i], message: `No covariate '${f}'` });
        else if (!STRATUM_KINDS.has(c.kind) || !c.required) {
          ctx.addIssue({
            code: 'custom',
            path: ['allocation', 'factors', i],
            message: `'${f}' must be a required binary or categorical covariate`,
          });
        }
      });
    }
  });
export type DesignBody = z.infer<typeof designBodySchema>;
export type DesignBodyInput = z.input<typeof designBodySchema>;

/** Strata planner (Hallstrom & Davis 1988: with K strata and block size B, imbalance is at most K*B/2). */
export const strataPlanSchema = z.object({
  strataCount: z.number().int(),
  stratificationFactors: z.array(z.string()),
  maxBlockSize: z.number().int().nullable(),
  /** K * B / 2: the largest overall imbalance the scheme allows. */
  worstCaseImbalance: z.number().nullable(),
  /** Expected participants per stratum at the target sample size. */
  perStratumAtTarget: z.number(),
  warnings: z.array(z.object({ code: z.string(), message: z.string() })),
});
export type StrataPlan = z.infer<typeof strataPlanSchema>;

export const armDtoSchema = z.object({ id: z.uuid(), code: z.string(), name: z.string(), ratio: z.number().int() });
export const siteDtoSchema = z.object({
  id: z.uuid(),
  code: z.string(),
  name: z.string(),
  enrollmentTarget: z.number().int(),
  status: siteStatusSchema,
});
export const covariateDtoSchema = z.object({
  id: z.uuid(),
  key: z.string(),
  label: z.string(),
  kind: z.enum(['continuous', 'binary', 'categorical']),
  unit: z.string().nullable(),
  min: z.number().nullable(),
  max: z.number().nullable(),
  decimals: z.number().int().nullable(),
  levels: z.array(z.string()).nullable(),
  required: z.boolean(),
  windowDaysBefore: z.number().int(),
  windowDaysAfter: z.number().int(),
  isStratification: z.boolean(),
  isAdjustment: z.boolean(),
  isOutcomeBaseline: z.boolean(),
  reliability: z.number().nullable(),
  position: z.number().int(),
});
export type CovariateDto = z.infer<typeof covariateDtoSchema>;

/** The stored scheme; seed, algorithm and version are present only for the unblinded statistician. */
export const allocationSchemeDtoSchema = z.intersection(
  allocationSchemeSchema,
  z.object({ seed: z.string().optional(), algorithm: z.string().optional(), algorithmVersion: z.string().optional() }),
);

/** What site staff and sponsors get: the method only (block sizes, factors and seed stay concealed, ICH E9 2.3.1). */
export const concealedAllocationSchema = z.object({
  method: z.enum(['permuted_blocks', 'minimization', 'exposure_recorded']),
  concealed: z.literal(true),
});

export const studyDetailSchema = z.object({
  id: z.uuid(),
  code: z.string(),
  title: z.string(),
  kind: studyKindSchema,
  blinding: blindingSchema,
  status: studyStatusSchema,
  targetSampleSize: z.number().int(),
  designVersion: z.number().int(),
  enrolled: z.number().int(),
  /** Arms with names only for unblinded roles (and site staff of open-label studies); otherwise null. */
  arms: z.array(armDtoSchema).nullable(),
  armCount: z.number().int(),
  sites: z.array(siteDtoSchema),
  covariates: z.array(covariateDtoSchema),
  screeningQuestions: z.array(screeningQuestionSchema),
  eligibility: z.array(eligibilityCriterionSchema),
  allocation: z.union([allocationSchemeDtoSchema, concealedAllocationSchema]).nullable(),
  alertRules: alertRulesSchema,
  strataPlan: strataPlanSchema.nullable(),
  myRole: z.string(),
  permissions: z.array(z.string()),
  unblinded: z.boolean(),
  /** Whether the caller may see the arm of a participant (unblinded, or site staff of an open-label study). */
  canSeeArms: z.boolean(),
});
export type StudyDetail = z.infer<typeof studyDetailSchema>;

export const designSaveResponseSchema = z.object({ study: studyDetailSchema });
