import { z } from 'zod';
import { designBodySchema, type DesignBody, type EligibilityCriterion } from '@counterpoise/contracts/design';
import { fullAllocation, type StudyDetail } from '../../../lib/study-detail.js';

/*
 * The design form keeps what people type (lists as text, optional numbers as strings) and
 * converts to the API body on submit. The converted body is then checked by the contracts'
 * own `designBodySchema`, so the page refuses exactly what the server refuses. Draft paths
 * mirror body paths (arms.0.code, allocation.blockSizes ...), so issues land on their fields.
 */

export type CovariateKind = 'continuous' | 'binary' | 'categorical';

export type ArmDraft = { code: string; name: string; ratio: number };
export type SiteDraft = {
  code: string;
  name: string;
  enrollmentTarget: number;
  status: 'active' | 'paused' | 'closed';
};
export type CovariateDraft = {
  key: string;
  label: string;
  kind: CovariateKind;
  required: boolean;
  windowDaysBefore: number;
  windowDaysAfter: number;
  isStratification: boolean;
  isAdjustment: boolean;
  isOutcomeBaseline: boolean;
  /** '' for unknown. */
  reliability: string;
  unit: string;
  min: string;
  max: string;
  decimals: number;
  /** One level per line. */
  levels: string;
};
export type QuestionDraft = {
  key: string;
  label: string;
  kind: 'binary' | 'number' | 'choice';
  levels: string;
};
export type CriterionDraft = {
  id: string;
  kind: 'inclusion' | 'exclusion';
  label: string;
  field: string;
  op: EligibilityCriterion['op'];
  /** A number, yes/no, a level, or a comma-separated list for 'in'. */
  value: string;
};
export type FactorDraft = { factor: string; weight: number };
export type AllocationDraft = {
  method: 'permuted_blocks' | 'minimization' | 'exposure_recorded';
  /** Comma-separated, e.g. "4, 6". */
  blockSizes: string;
  stratifyBySite: boolean;
  factors: FactorDraft[];
  probability: number;
  imbalance: 'range' | 'variance';
  estimand: 'ATE' | 'ATT' | 'overlap';
};
export type DesignDraft = {
  targetSampleSize: number;
  arms: ArmDraft[];
  sites: SiteDraft[];
  covariates: CovariateDraft[];
  screeningQuestions: QuestionDraft[];
  eligibility: CriterionDraft[];
  allocation: AllocationDraft;
  reason: string;
};

export const newCovariate = (): CovariateDraft => ({
  key: '',
  label: '',
  kind: 'continuous',
  required: true,
  windowDaysBefore: 30,
  windowDaysAfter: 0,
  isStratification: false,
  isAdjustment: false,
  isOutcomeBaseline: false,
  reliability: '',
  unit: '',
  min: '',
  max: '',
  decimals: 0,
  levels: '',
});

export const newCriterion = (index: number): CriterionDraft => ({
  id: `C${index + 1}`,
  kind: 'inclusion',
  label: '',
  field: '',
  op: '>=',
  value: '',
});

const lines = (text: string): string[] =>
  text
    .split(/\r?\n/)
    .map((s) => s.trim())
    .filter(Boolean);
const commaList = (text: string): string[] =>
  text
    .split(',')
    .map((s) => s.trim())
    .filter(Boolean);

/** '' stays NaN so the schema says "enter a number" instead of silently using 0. */
const toNumber = (text: string): number => (text.trim() === '' ? Number.NaN : Number(text));

function formatCriterionValue(value: EligibilityCriterion['value']): string {
  if (Array.isArray(value)) return value.join(', ');
  if (typeof value === 'boolean') return value ? 'yes' : 'no';
  return String(value);
}

export function draftFromStudy(study: StudyDetail): DesignDraft {
  const a = fullAllocation(study);
  const defaultMethod = study.kind === 'observational_cohort' ? 'exposure_recorded' : 'permuted_blocks';
  return {
    targetSampleSize: study.targetSampleSize,
    arms: (study.arms ?? []).map((x) => ({ code: x.code, name: x.name, ratio: x.ratio })),
    sites: study.sites.map((s) => ({
      code: s.code,
      name: s.name,
      enrollmentTarget: s.enrollmentTarget,
      status: s.status,
    })),
    covariates: study.covariates.map((c) => ({
      key: c.key,
      label: c.label,
      kind: c.kind,
      required: c.required,
      windowDaysBefore: c.windowDaysBefore,
      windowDaysAfter: c.windowDaysAfter,
      isStratification: c.isStratification,
      isAdjustment: c.isAdjustment,
      isOutcomeBaseline: c.isOutcomeBaseline,
      reliability: c.reliability === null ? '' : String(c.reliability),
      unit: c.unit ?? '',
      min: c.min === null ? '' : String(c.min),
      max: c.max === null ? '' : String(c.max),
      decimals: c.decimals ?? 0,
      levels: (c.levels ?? []).join('\n'),
    })),
    screeningQuestions: study.screeningQuestions.map((q) => ({
      key: q.key,
      label: q.label,
      kind: q.kind,
      levels: (q.levels ?? []).join('\n'),
    })),
    eligibility: study.eligibility.map((c) => ({
      id: c.id,
      kind: c.kind,
      label: c.label,
      field: c.field,
      op: c.op,
      value: formatCriterionValue(c.value),
    })),
    allocation: {
      method: a?.method ?? defaultMethod,
      blockSizes: a?.method === 'permuted_blocks' ? a.blockSizes.join(', ') : '4, 6',
      stratifyBySite: a?.method === 'permuted_blocks' ? a.stratifyBySite : true,
      factors:
        a?.method === 'minimization'
          ? a.factors.map((f, i) => ({ factor: f, weight: a.weights[i] ?? 1 }))
          : [{ factor: 'site', weight: 1 }],
      probability: a?.method === 'minimization' ? a.probability : 0.75,
      imbalance: a?.method === 'minimization' ? a.imbalance : 'range',
      estimand: a?.method === 'exposure_recorded' ? a.weighting.estimand : 'ATE',
    },
    reason: '',
  };
}

/** What kind of answer a criterion's field takes, from the covariate or screening question it names. */
export type FieldKind = 'number' | 'yesno' | 'choice' | 'unknown';

export function fieldKinds(
  draft: Pick<DesignDraft, 'covariates' | 'screeningQuestions'>,
): Map<string, FieldKind> {
  const map = new Map<string, FieldKind>();
  for (const c of draft.covariates) {
    map.set(c.key, c.kind === 'continuous' ? 'number' : c.kind === 'binary' ? 'yesno' : 'choice');
  }
  for (const q of draft.screeningQuestions) {
    map.set(q.key, q.kind === 'number' ? 'number' : q.kind === 'binary' ? 'yesno' : 'choice');
  }
  return map;
}

function criterionValue(
  text: string,
  op: CriterionDraft['op'],
  kind: FieldKind,
): EligibilityCriterion['value'] {
  const one = (t: string): number | string | boolean => {
    if (kind === 'number') return toNumber(t);
    if (kind === 'yesno') {
      const v = t.trim().toLowerCase();
      if (v === 'yes' || v === 'true') return true;
      if (v === 'no' || v === 'false') return false;
      return t.trim();
    }
    return t.trim();
  };
  if (op === 'in') {
    return commaList(text).map((t) => {
      const v = one(t);
      return typeof v === 'boolean' ? String(v) : v;
    });
  }
  return one(text);
}

export function bodyFromDraft(d: DesignDraft, withReason: boolean): unknown {
  const kinds = fieldKinds(d);
  const a = d.allocation;
  const allocation =
    a.method === 'permuted_blocks'
      ? {
          method: a.method,
          blockSizes: commaList(a.blockSizes).map(Number),
          stratifyBySite: a.stratifyBySite,
        }
      : a.method === 'minimization'
        ? {
            method: a.method,
            factors: a.factors.map((f) => f.factor),
            weights: a.factors.map((f) => f.weight),
            probability: a.probability,
            imbalance: a.imbalance,
          }
        : { method: a.method, weighting: { estimand: a.estimand } };
  return {
    targetSampleSize: d.targetSampleSize,
    arms: d.arms,
    sites: d.sites,
    covariates: d.covariates.map((c) => {
      const common = {
        key: c.key,
        label: c.label,
        required: c.required,
        windowDaysBefore: c.windowDaysBefore,
        windowDaysAfter: c.windowDaysAfter,
        isStratification: c.isStratification,
        isAdjustment: c.isAdjustment,
        isOutcomeBaseline: c.isOutcomeBaseline,
        reliability: c.reliability.trim() === '' ? null : toNumber(c.reliability),
      };
      if (c.kind === 'continuous') {
        return {
          ...common,
          kind: c.kind,
          unit: c.unit,
          min: toNumber(c.min),
          max: toNumber(c.max),
          decimals: c.decimals,
        };
      }
      if (c.kind === 'binary') return { ...common, kind: c.kind };
      return { ...common, kind: c.kind, levels: lines(c.levels) };
    }),
    screeningQuestions: d.screeningQuestions.map((q) => ({
      key: q.key,
      label: q.label,
      kind: q.kind,
      ...(q.kind === 'choice' ? { levels: lines(q.levels) } : {}),
    })),
    eligibility: d.eligibility.map((c) => ({
      id: c.id,
      kind: c.kind,
      label: c.label,
      field: c.field,
      op: c.op,
      value: criterionValue(c.value, c.op, kinds.get(c.field) ?? 'unknown'),
    })),
    allocation,
    ...(withReason ? { reason: d.reason } : {}),
  };
}

/** Draft in, API body out; zod issues carry body paths, which are also the draft's field names. */
export function designDraftSchema(withReason: boolean) {
  const body = withReason
    ? designBodySchema.and(
        z.object({ reason: z.string().trim().min(3, 'Give a reason of at least 3 characters') }),
      )
    : designBodySchema;
  return z
    .custom<DesignDraft>()
    .transform((d) => bodyFromDraft(d, withReason))
    .pipe(body) as unknown as z.ZodType<DesignBody, DesignDraft>;
}

/** Friendlier words for zod's default messages (schema-specific messages win over these). */
export const plainErrors = (issue: {
  code: string;
  expected?: string;
  input?: unknown;
  minimum?: unknown;
  maximum?: unknown;
}) => {
  if (issue.code === 'invalid_type' && issue.expected === 'number') return 'Enter a number';
  if (issue.code === 'invalid_type') return 'Required';
  if (issue.code === 'too_small' && typeof issue.input === 'number')
    return `Must be at least ${String(issue.minimum)}`;
  if (issue.code === 'too_big' && typeof issue.input === 'number')
    return `Must be at most ${String(issue.maximum)}`;
  if (issue.code === 'too_small' && typeof issue.input === 'string') return 'Required';
  if (issue.code === 'invalid_format') return 'Use only the allowed characters';
  return undefined;
};

/** The strata planner's arithmetic on the unsaved draft (the API's plan is the one stored). */
export function draftStrata(d: DesignDraft): { strata: number; maxBlock: number; bound: number } | null {
  if (d.allocation.method !== 'permuted_blocks') return null;
  const sizes = commaList(d.allocation.blockSizes)
    .map(Number)
    .filter((n) => Number.isFinite(n) && n > 0);
  if (sizes.length === 0) return null;
  let strata = 1;
  for (const c of d.covariates) {
    if (!c.isStratification) continue;
    strata *= c.kind === 'binary' ? 2 : Math.max(1, lines(c.levels).length);
  }
  if (d.allocation.stratifyBySite) strata *= Math.max(1, d.sites.length);
  const maxBlock = Math.max(...sizes);
  return { strata, maxBlock, bound: (strata * maxBlock) / 2 };
}
