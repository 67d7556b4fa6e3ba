import { balanceCautions, type Weighting } from '@counterpoise/contracts/balance';
import {
  categoricalSmd,
  effectiveSampleSize,
  logisticRegression,
  propensityWeights,
  standardizedMeanDifference,
  varianceRatio,
} from '@counterpoise/stats';
import { armSql, codeValue, rows, type CovariateInfo, type Queryable, type StudyConfig } from './balance-config.js';

/** A weight more than this many times the mean weight counts as extreme (common practice; no published source). */
export const EXTREME_WEIGHT_FACTOR = 10;
/** An arm whose effective sample size is below this share of its n is flagged (common practice). */
export const LOW_ESS_SHARE = 0.5;
const BINS = 20;

export type WeightingRow = { participantId: string; armId: string; values: Map<string, number | string> };

/** Every counted participant of a cohort with coded values (one statement). */
export async function loadWeightingRows(db: Queryable, config: StudyConfig): Promise<WeightingRow[]> {
  const data = await rows<{ id: string; arm_id: string; vals: [string, number | null, string | null][] }>(
    db,
    `SELECT p.id, ${armSql(config.kind)} AS arm_id,
            COALESCE((SELECT json_agg(json_build_array(b.covariate_id, b.value_number, b.value_text))
                        FROM baseline_value b WHERE b.participant_id = p.id), '[]'::json) AS vals
       FROM participant p LEFT JOIN allocation a ON a.participant_id = p.id
      WHERE p.study_id = $1 AND p.status IN ('enrolled', 'withdrawn') AND ${armSql(config.kind)} IS NOT NULL
      ORDER BY p.id`,
    [config.id],
  );
  const byId = new Map(config.covariates.map((c) => [c.id, c]));
  return data.map((r) => {
    const values = new Map<string, number | string>();
    for (const [covId, n, t] of r.vals) {
      const cov = byId.get(covId);
      if (!cov) continue;
      const v = codeValue(cov.kind, n, t);
      if (v !== null) values.set(cov.key, v);
    }
    return { participantId: r.id, armId: r.arm_id, values };
  });
}

/** Model columns: continuous and binary as they are, categorical as dummies (first observed level left out). */
export function designColumns(
  covariates: CovariateInfo[],
  sample: WeightingRow[],
): { terms: string[]; row: (r: WeightingRow) => number[] } {
  const cols: { term: string; get: (r: WeightingRow) => number }[] = [];
  for (const cov of covariates) {
    if (cov.kind === 'categorical') {
      const seen = new Set<string>();
      for (const r of sample) seen.add(String(r.values.get(cov.key)));
      const declared = (cov.levels ?? []).filter((l) => seen.has(l));
      const extra = [...seen].filter((l) => !declared.includes(l)).sort();
      const levels = [...declared, ...extra];
      for (const l of levels.slice(1)) cols.push({ term: `${cov.key}=${l}`, get: (r) => (r.values.get(cov.key) === l ? 1 : 0) });
    } else {
      cols.push({ term: cov.key, get: (r) => r.values.get(cov.key) as number });
    }
  }
  return { terms: cols.map((c) => c.term), row: (r) => cols.map((c) => c.get(r)) };
}

function histogram(values: number[], from: number, to: number): { from: number; to: number; count: number }[] {
  const width = (to - from) / BINS || 1;
  const bins = Array.from({ length: BINS }, (_, i) => ({ from: from + i * width, to: from + (i + 1) * width, count: 0 }));
  for (const v of values) {
    const i = Math.min(BINS - 1, Math.max(0, Math.floor((v - from) / width)));
    bins[i]!.count++;
  }
  return bins;
}

const safe = <T>(f: () => T): T | null => {
  try {
    return f();
  } catch (err) {
    if (err instanceof RangeError || (err instanceof Error && err.name === 'ConvergenceError')) return null;
    throw err;
  }
};

/**
 * Propensity-score weighting for a two-group cohort: a logistic model of group on the
 * adjustment covariates (complete cases), weights for the design's estimand, SMDs before and
 * after weighting for every covariate on the same sample, the weight distribution, the
 * effective sample size per group and the propensity-score overlap.
 */
export function computeWeighting(config: StudyConfig, data: WeightingRow[]): Weighting {
  const estimand = config.estimand ?? 'ATE';
  const model = config.covariates.filter((c) => c.isAdjustment);
  const empty = (note: string): Weighting => ({
    estimand,
    status: 'not_available',
    note,
    treatedArmId: config.arms[1]?.id ?? null,
    modelCovariates: model.map((c) => c.key),
    modelTerms: [],
    n: 0,
    maxWeight: null,
    extremeWeightThreshold: null,
    extremeWeightCount: 0,
    effectiveSampleSize: [],
    weightHistogram: [],
    propensityOverlap: [],
    covariates: [],
    flags: { extremeWeights: false, lowEffectiveSampleSize: false },
    cautions: [balanceCautions.weighting, balanceCautions.judgement],
  });
  if (config.arms.length !== 2) return empty('Propensity weighting is computed for two groups only.');
  if (model.length === 0) return empty('No covariate is marked for adjustment, so there is no propensity model.');
  const [ref, treatedArm] = config.arms as [typeof config.arms[0], typeof config.arms[0]];
  const sample = data.filter((r) => model.every((c) => r.values.has(c.key)));
  const dropped = data.length - sample.length;
  const { terms, row } = designColumns(model, sample);
  const y = sample.map((r) => (r.armId === treatedArm.id ? 1 : 0));
  let fitted: number[];
  try {
    fitted = logisticRegression(sample.map(row), y, { names: terms }).fitted;
  } catch (err) {
    const msg = err instanceof Error ? err.message : String(err);
    return { ...empty(`The propensity model could not be fitted: ${msg}`), modelTerms: terms, n: sample.length };
  }
  const pw = safe(() => propensityWeights(fitted, y, { estimand }));
  if (!pw) return { ...empty('Propensity weights are undefined (a fitted score of 0 or 1).'), modelTerms: terms, n: sample.length };
  const w = pw.weights;
  const idxT = sample.flatMap((_, i) => (y[i] === 1 ? [i] : []));
  const idxC = sample.flatMap((_, i) => (y[i] === 0 ? [i] : []));
  const meanWeight = w.reduce((s, x) => s + x, 0) / w.length;
  const threshold = EXTREME_WEIGHT_FACTOR * meanWeight;
  const extreme = w.filter((x) => x > threshold).length;
  const ess = [
    { armId: ref.id, n: idxC.length, ess: effectiveSampleSize(idxC.map((i) => w[i]!)) },
    { armId: treatedArm.id, n: idxT.length, ess: effectiveSampleSize(idxT.map((i) => w[i]!)) },
  ];
  const lowEss = ess.some((e) => e.ess < LOW_ESS_SHARE * e.n);

  const covariates = config.covariates.map((cov) => {
    const t = idxT.filter((i) => sample[i]!.values.has(cov.key));
    const c = idxC.filter((i) => sample[i]!.values.has(cov.key));
    const val = (i: number) => sample[i]!.values.get(cov.key)!;
    const wt = t.map((i) => w[i]!);
    const wc = c.map((i) => w[i]!);
    let before: number | null = null;
    let after: number | null = null;
    let vrBefore: number | null = null;
    let vrAfter: number | null = null;
    if (cov.kind === 'categorical') {
      const lt = t.map((i) => String(val(i)));
      const lc = c.map((i) => String(val(i)));
      before = safe(() => categoricalSmd(lt, lc));
      after = safe(() => categoricalSmd(lt, lc, { treated: wt, control: wc }));
    } else {
      const xt = t.map((i) => val(i) as number);
      const xc = c.map((i) => val(i) as number);
      before = safe(() => standardizedMeanDifference(xt, xc, { kind: cov.kind as 'continuous' | 'binary' }));
      after = safe(() =>
        standardizedMeanDifference(xt, xc, { kind: cov.kind as 'continuous' | 'binary', weightsTreated: wt, weightsControl: wc }),
      );
      if (cov.kind === 'continuous') {
        vrBefore = safe(() => varianceRatio(xt, xc));
        vrAfter = safe(() => varianceRatio(xt, xc, { treated: wt, control: wc }));
      }
    }
    return { key: cov.key, inModel: cov.isAdjustment, smdBefore: before, smdAfter: after, varianceRatioBefore: vrBefore, varianceRatioAfter: vrAfter };
  });

  const cautions: string[] = [balanceCautions.weighting];
  if (estimand === 'overlap') {
    cautions.push('Overlap weights balance the means of the model covariates exactly by construction: judge balance on the other covariates.');
  }
  if (extreme > 0) cautions.push(`${extreme} weight(s) exceed ${EXTREME_WEIGHT_FACTOR} times the mean weight: a few participants dominate.`);
  if (lowEss) cautions.push(`The effective sample size of a group is below ${LOW_ESS_SHARE * 100}% of its n.`);
  cautions.push(balanceCautions.judgement);

  return {
    estimand,
    status: 'ok',
    note: dropped > 0 ? `${dropped} participant(s) with a missing model covariate are left out of the weighting.` : null,
    treatedArmId: treatedArm.id,
    modelCovariates: model.map((c) => c.key),
    modelTerms: terms,
    n: sample.length,
    maxWeight: pw.maxWeight,
    extremeWeightThreshold: threshold,
    extremeWeightCount: extreme,
    effectiveSampleSize: ess,
    weightHistogram: [ref, treatedArm].map((arm, k) => {
      const idx = k === 0 ? idxC : idxT;
      return { armId: arm.id, bins: histogram(idx.map((i) => w[i]!), 0, pw.maxWeight) };
    }),
    propensityOverlap: [ref, treatedArm].map((arm, k) => {
      const idx = k === 0 ? idxC : idxT;
      return { armId: arm.id, bins: histogram(idx.map((i) => fitted[i]!), 0, 1) };
    }),
    covariates,
    flags: { extremeWeights: extreme > 0, lowEffectiveSampleSize: lowEss },
    cautions,
  };
}
