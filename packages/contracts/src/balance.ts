import { z } from 'zod';

/**
 * Baseline-balance DTOs shared by the API and the web dashboard: the latest snapshot (arm-level
 * for unblinded roles, pooled for sponsors), its history, drift alerts and the baseline table.
 *
 * Conventions: an SMD is arm minus reference arm (the first arm of the design); with more than
 * two arms every other arm is compared with the reference (pairwise, `comparisonNote` says so).
 * A number that cannot be computed is `null` with a `note` saying why, never NaN.
 * Withdrawn participants stay in every figure (intention-to-treat: baseline is as randomized).
 */

export const alertRuleSchema = z.enum(['smd_threshold', 'variance_ratio', 'smd_beyond_chance']);
export type AlertRule = z.infer<typeof alertRuleSchema>;

export const balanceRulesSchema = z.object({
  smdThreshold: z.number(),
  varianceRatio: z.tuple([z.number(), z.number()]),
  chanceAware: z.boolean(),
  minPerArmForSiteAlerts: z.number().int(),
  /** Level of the chance band (0.95). */
  chanceLevel: z.number(),
});
export type BalanceRules = z.infer<typeof balanceRulesSchema>;

export const freshnessSchema = z.object({
  /** When the snapshot served was computed (null: none yet). */
  computedAt: z.string().nullable(),
  /** A recompute job for this study is queued or running. */
  recomputePending: z.boolean(),
  /** Enrolled participants (ITT: enrolled + withdrawn) when the snapshot was computed. */
  enrolledCount: z.number().int().nullable(),
});
export type Freshness = z.infer<typeof freshnessSchema>;

export const levelCountSchema = z.object({
  level: z.string(),
  n: z.number().int(),
  /** Share of the non-missing values, 0-100. */
  percent: z.number().nullable(),
});

export const covariateSummarySchema = z.object({
  /** Non-missing values. */
  n: z.number().int(),
  missing: z.number().int(),
  mean: z.number().nullable(),
  sd: z.number().nullable(),
  median: z.number().nullable(),
  q1: z.number().nullable(),
  q3: z.number().nullable(),
  min: z.number().nullable(),
  max: z.number().nullable(),
  /** Binary and categorical covariates: count and % per level (binary: '0' and '1'). */
  levels: z.array(levelCountSchema).nullable(),
});
export type CovariateSummary = z.infer<typeof covariateSummarySchema>;

export const chanceBandSchema = z.object({
  level: z.number(),
  /** sqrt(1/n_arm + 1/n_reference). */
  se: z.number(),
  halfWidth: z.number(),
  lower: z.number(),
  upper: z.number(),
});
export type ChanceBand = z.infer<typeof chanceBandSchema>;

export const balanceFlagsSchema = z.object({
  smdOverThreshold: z.boolean(),
  beyondChance: z.boolean(),
  varianceRatioOutside: z.boolean(),
});
export type BalanceFlags = z.infer<typeof balanceFlagsSchema>;

export const armComparisonSchema = z.object({
  armId: z.uuid(),
  referenceArmId: z.uuid(),
  nArm: z.number().int(),
  nReference: z.number().int(),
  smd: z.number().nullable(),
  /** Continuous covariates only. */
  varianceRatio: z.number().nullable(),
  chanceBand: chanceBandSchema.nullable(),
  flags: balanceFlagsSchema,
  /** Why a figure is missing (too few values, zero variance...). */
  note: z.string().nullable(),
});
export type ArmComparison = z.infer<typeof armComparisonSchema>;

export const covariateBalanceSchema = z.object({
  byArm: z.array(z.object({ armId: z.uuid(), summary: covariateSummarySchema })),
  pooled: covariateSummarySchema,
  comparisons: z.array(armComparisonSchema),
});
export type CovariateBalance = z.infer<typeof covariateBalanceSchema>;

export const covariateMetaSchema = z.object({
  key: z.string(),
  label: z.string(),
  kind: z.enum(['continuous', 'binary', 'categorical']),
  unit: z.string().nullable(),
  levels: z.array(z.string()).nullable(),
  isAdjustment: z.boolean(),
  isStratification: z.boolean(),
});
export type CovariateMeta = z.infer<typeof covariateMetaSchema>;

export const balanceArmSchema = z.object({ id: z.uuid(), code: z.string(), name: z.string(), position: z.number().int() });

export const siteCountsSchema = z.object({
  siteId: z.uuid(),
  code: z.string(),
  name: z.string(),
  enrolled: z.number().int(),
  nByArm: z.array(z.object({ armId: z.uuid(), n: z.number().int() })),
  /** Every arm has at least `minPerArmForSiteAlerts`: site SMDs are shown and alerted on. */
  judgeable: z.boolean(),
});

export const siteGridCellSchema = z.object({
  key: z.string(),
  comparisons: z.array(
    z.object({ armId: z.uuid(), smd: z.number().nullable(), halfWidth: z.number().nullable(), flags: balanceFlagsSchema }),
  ),
});

export const siteGridRowSchema = siteCountsSchema.extend({ cells: z.array(siteGridCellSchema) });

export const chanceSummarySchema = z.object({
  covariateCount: z.number().int(),
  threshold: z.number(),
  /** Crossings of the threshold chance alone gives on average across all covariates (reference comparison). */
  expected: z.number().nullable(),
  probabilityAtLeastOne: z.number().nullable(),
  /** How many covariates actually cross it overall. */
  observed: z.number().int(),
});

export const histogramBinSchema = z.object({ from: z.number(), to: z.number(), count: z.number().int() });

export const weightingSchema = z.object({
  estimand: z.enum(['ATE', 'ATT', 'overlap']),
  status: z.enum(['ok', 'not_available']),
  /** Why weighting is not available (too few participants, separation, more than two groups...). */
  note: z.string().nullable(),
  /** The group modelled as "treated" (the non-reference arm). */
  treatedArmId: z.uuid().nullable(),
  modelCovariates: z.array(z.string()),
  modelTerms: z.array(z.string()),
  n: z.number().int(),
  maxWeight: z.number().nullable(),
  /** Weights above this (a multiple of the mean weight) count as extreme. */
  extremeWeightThreshold: z.number().nullable(),
  extremeWeightCount: z.number().int(),
  effectiveSampleSize: z.array(z.object({ armId: z.uuid(), n: z.number().int(), ess: z.number() })),
  weightHistogram: z.array(z.object({ armId: z.uuid(), bins: z.array(histogramBinSchema) })),
  propensityOverlap: z.array(z.object({ armId: z.uuid(), bins: z.array(histogramBinSchema) })),
  covariates: z.array(
    z.object({
      key: z.string(),
      inModel: z.boolean(),
      smdBefore: z.number().nullable(),
      smdAfter: z.number().nullable(),
      varianceRatioBefore: z.number().nullable(),
      varianceRatioAfter: z.number().nullable(),
    }),
  ),
  flags: z.object({ extremeWeights: z.boolean(), lowEffectiveSampleSize: z.boolean() }),
  cautions: z.array(z.string()),
});
export type Weighting = z.infer<typeof weightingSchema>;

export const snapshotMetaSchema = z.object({
  id: z.uuid(),
  computedAt: z.string(),
  kind: z.enum(['full', 'incremental']),
  reason: z.string(),
  designVersion: z.number().int(),
  enrolledCount: z.number().int(),
  studyKind: z.enum(['randomized_trial', 'observational_cohort']),
  /** When medians and quartiles were last computed from all rows (incremental runs may carry them over). */
  quantilesComputedAt: z.string(),
});

/** GET /balance for unblinded roles. `scope.siteId` is set with `?site=`. */
export const balanceArmsViewSchema = z.object({
  view: z.literal('arms'),
  freshness: freshnessSchema,
  snapshot: snapshotMetaSchema,
  scope: z.object({ siteId: z.uuid().nullable() }),
  arms: z.array(balanceArmSchema),
  referenceArmId: z.uuid(),
  /** Set when there are more than two arms: comparisons are pairwise against the reference arm. */
  comparisonNote: z.string().nullable(),
  rules: balanceRulesSchema,
  chance: chanceSummarySchema,
  covariates: z.array(covariateMetaSchema.extend({ balance: covariateBalanceSchema })),
  /** Overall scope only: site-by-covariate SMDs, sites too small to judge marked. */
  siteGrid: z.array(siteGridRowSchema).nullable(),
  /** Site scope only: that site's counts. */
  site: siteCountsSchema.nullable(),
  weighting: weightingSchema.nullable(),
  cautions: z.array(z.string()),
});
export type BalanceArmsView = z.infer<typeof balanceArmsViewSchema>;

/** GET /balance for sponsors: enrollment, completeness and pooled distributions; never arm-level. */
export const balancePooledViewSchema = z.object({
  view: z.literal('pooled'),
  freshness: freshnessSchema,
  computedAt: z.string().nullable(),
  targetSampleSize: z.number().int(),
  enrolled: z.number().int(),
  sites: z.array(
    z.object({
      siteId: z.uuid(),
      code: z.string(),
      name: z.string(),
      enrollmentTarget: z.number().int(),
      enrolled: z.number().int(),
      /** Share (0-100) of the required covariate values present for this site's participants. */
      completeness: z.number().nullable(),
    }),
  ),
  covariates: z.array(
    covariateMetaSchema.extend({ pooled: covariateSummarySchema, completeness: z.number().nullable() }),
  ),
  cautions: z.array(z.string()),
});
export type BalancePooledView = z.infer<typeof balancePooledViewSchema>;

export const balanceResponseSchema = z.discriminatedUnion('view', [balanceArmsViewSchema, balancePooledViewSchema]);
export type BalanceResponse = z.infer<typeof balanceResponseSchema>;

const booleanQuery = z
  .enum(['true', 'false'])
  .optional()
  .transform((v) => v === 'true');

export const balanceQuerySchema = z.object({
  site: z.uuid().optional(),
  /** 'arms' (unblinded roles) or 'pooled'; default: the most detailed view the caller may see. */
  view: z.enum(['arms', 'pooled']).optional(),
});
export type BalanceQuery = z.infer<typeof balanceQuerySchema>;

export const balanceHistoryQuerySchema = z.object({
  site: z.uuid().optional(),
  /** At most this many points, spread evenly over enrollment (default 200). */
  points: z.coerce.number().int().min(2).max(1000).optional(),
});

export const balanceHistorySchema = z.object({
  freshness: freshnessSchema,
  arms: z.array(balanceArmSchema),
  referenceArmId: z.uuid().nullable(),
  comparisonNote: z.string().nullable(),
  threshold: z.number(),
  scope: z.object({ siteId: z.uuid().nullable() }),
  series: z.array(
    z.object({
      key: z.string(),
      label: z.string(),
      armId: z.uuid(),
      points: z.array(
        z.object({
          computedAt: z.string(),
          enrolledCount: z.number().int(),
          smd: z.number().nullable(),
          /** Half-width of the 95% chance band at that point's group sizes. */
          halfWidth: z.number().nullable(),
        }),
      ),
    }),
  ),
  cautions: z.array(z.string()),
});
export type BalanceHistory = z.infer<typeof balanceHistorySchema>;

export const recomputeResponseSchema = z.object({ jobId: z.string().nullable(), alreadyPending: z.boolean() });

export const alertStateSchema = z.enum(['open', 'acknowledged', 'cleared']);
export type AlertState = z.infer<typeof alertStateSchema>;

export const alertSchema = z.object({
  id: z.uuid(),
  rule: alertRuleSchema,
  covariateKey: z.string(),
  covariateLabel: z.string(),
  /** null: the overall (all sites) comparison. */
  siteId: z.uuid().nullable(),
  siteCode: z.string().nullable(),
  armId: z.uuid(),
  referenceArmId: z.uuid(),
  state: alertStateSchema,
  /** 1 for the first time this condition held, 2 after it cleared and returned, ... */
  opening: z.number().int(),
  openedAt: z.string(),
  acknowledgedAt: z.string().nullable(),
  acknowledgedBy: z.object({ id: z.uuid(), email: z.string() }).nullable(),
  comment: z.string().nullable(),
  clearedAt: z.string().nullable(),
  lastEvaluatedAt: z.string(),
  lastSmd: z.number().nullable(),
  lastVarianceRatio: z.number().nullable(),
  lastHalfWidth: z.number().nullable(),
  lastNArm: z.number().int(),
  lastNReference: z.number().int(),
});
export type Alert = z.infer<typeof alertSchema>;

export const alertListQuerySchema = z.object({ state: z.enum(['open', 'acknowledged', 'cleared', 'active']).optional() });
export const alertListSchema = z.object({ alerts: z.array(alertSchema), cautions: z.array(z.string()) });

export const alertPatchBodySchema = z.object({
  state: z.literal('acknowledged'),
  comment: z.string().trim().min(3, 'Give a comment of at least 3 characters').max(2000),
});
export type AlertPatchBody = z.infer<typeof alertPatchBodySchema>;

export const baselineTableQuerySchema = z.object({ pvalues: booleanQuery, site: z.uuid().optional() });

export const baselineCellSchema = z.object({
  /** An arm id, or 'overall'. */
  column: z.string(),
  text: z.string(),
  n: z.number().int(),
});

export const baselineRowSchema = z.object({
  covariateKey: z.string(),
  label: z.string(),
  statistic: z.enum(['mean_sd', 'median_iqr', 'level', 'missing']),
  level: z.string().nullable(),
  cells: z.array(baselineCellSchema),
});

export const baselineTableSchema = z.object({
  freshness: freshnessSchema,
  scope: z.object({ siteId: z.uuid().nullable() }),
  columns: z.array(z.object({ column: z.string(), label: z.string(), n: z.number().int() })),
  rows: z.array(baselineRowSchema),
  /** Only with ?pvalues=true, always with its caution; never mixed into the table itself. */
  pValues: z
    .object({
      caution: z.string(),
      method: z.string(),
      values: z.array(
        z.object({
          covariateKey: z.string(),
          /** The arm compared against the reference arm. */
          armId: z.uuid(),
          referenceArmId: z.uuid(),
          pValue: z.number().nullable(),
          /** The test used, in plain words ('none' when no p-value). */
          test: z.string(),
          /** Why there is no p-value, why the exact test was used, or a doubt about the p-value given (small expected counts). */
          note: z.string().nullable(),
        }),
      ),
    })
    .nullable(),
  cautions: z.array(z.string()),
});
export type BaselineTable = z.infer<typeof baselineTableSchema>;

/** The texts shown with every balance figure (DOMAIN.md cautions 2, 11, 12 and the closing note). */
export const balanceCautions = {
  judgement:
    'These figures support, and do not replace, the judgement of the study statistician, the protocol and the applicable regulations and ethics approvals.',
  randomizedImbalance:
    'In a randomized trial baseline differences arise by chance: an imbalance, even beyond the chance band, does not justify adding a covariate to the analysis; the pre-specified analysis stands.',
  smallSites: 'Per-site SMDs are unstable in small sites: sites with fewer than the minimum per arm are marked and not alerted on.',
  weighting:
    'Balance after weighting is shown on measured covariates only and says nothing about unmeasured ones; extreme weights and a low effective sample size are flagged.',
  consortPValues:
    'Baseline p-values in a randomized trial test a null hypothesis known to be true (CONSORT 2010 item 15, CONSORT 2025 item 25; Senn 1994): they do not measure imbalance and must not guide covariate choice. Shown only on request, labelled.',
  withdrawn: 'Withdrawn participants stay in the baseline figures (intention-to-treat).',
} as const;
