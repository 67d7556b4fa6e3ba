import { analysisNote, type AnalysisSpec, type AnovaRow, type AssumptionCheck, type Caution, type RunResult } from '@counterpoise/contracts/analysis';
import {
  ancova,
  leastSquares,
  leveneTest,
  normalQuantile,
  oneWayAnova,
  sdRatioRule,
  shapiroWilk,
  slopeHomogeneityTest,
  standardizedMeanDifference,
  summarize,
  tQuantile,
  type AncovaResult,
} from '@counterpoise/stats';
import { AppError } from '../../http/app-error.js';
import type { StudyDesign } from '../design/study-design.js';
import * as C from './analysis-cautions.js';
import type { RawRow, StrataFactor } from './analysis-data.js';

/**
 * Turns the analysis population read from the database into a run result: every statistic comes
 * from @counterpoise/stats; this module only builds the design (which covariates, coded how),
 * applies the complete-case rule, and shapes charts and cautions.
 */

export type ComputeInput = {
  design: StudyDesign;
  spec: AnalysisSpec;
  specVersion: number;
  firstLockedVersion: number | null;
  exploratory: boolean;
  reason: string | null;
  factors: StrataFactor[];
  /** Per covariate key: values dated after randomization. */
  afterRandomization: Map<string, number>;
  rows: RawRow[];
};

type Term = { key: string; label: string; role: 'baseline_outcome' | 'adjustment' | 'stratification'; kind: 'continuous' | 'binary' | 'categorical' | 'site'; unit: string | null; reliability: number | null };
type Column = { name: string; term: Term; level: string | null; label: string };

const MAX_QQ = 400;
const MAX_SCATTER_PER_GROUP = 500;

/** Column names must not collide with ancova's own 'group' and 'error' terms. */
const safeName = (s: string) => (s === 'group' || s === 'error' ? `${s}_` : s);

function chooseTerms(input: ComputeInput): { terms: Term[]; blocked: Array<{ key: string; label: string; valuesAfterRandomization: number }> } {
  const { design, spec } = input;
  const wanted: Array<{ key: string; role: Term['role'] }> = [];
  if (spec.baselineCovariateKey) wanted.push({ key: spec.baselineCovariateKey, role: 'baseline_outcome' });
  for (const c of spec.covariates) wanted.push({ key: c.key, role: 'adjustment' });
  if (spec.includeStratificationFactors) {
    for (const f of input.factors) if (!wanted.some((w) => w.key === f.key)) wanted.push({ key: f.key, role: 'stratification' });
  }
  const terms: Term[] = [];
  const blocked: Array<{ key: string; label: string; valuesAfterRandomization: number }> = [];
  for (const w of wanted) {
    if (w.key === 'site') {
      terms.push({ key: 'site', label: 'Site', role: w.role, kind: 'site', unit: null, reliability: 1 });
      continue;
    }
    const def = design.covariates.find((c) => c.key === w.key);
    if (!def) throw new AppError('precondition_failed', `The specification names covariate '${w.key}', which the study's design no longer has`);
    const after = input.afterRandomization.get(w.key) ?? 0;
    if (after > 0) {
      blocked.push({ key: def.key, label: def.label, valuesAfterRandomization: after });
      continue;
    }
    terms.push({ key: def.key, label: def.label, role: w.role, kind: def.kind, unit: def.unit, reliability: def.reliability });
  }
  return { terms, blocked };
}

function rawValue(row: RawRow, term: Term): number | string | null {
  if (term.kind === 'site') return row.siteCode;
  const v = row.values.get(term.key);
  if (!v) return null;
  if (term.kind === 'categorical') return v.t;
  return v.n;
}

function anovaRow(source: string, label: string, df: number, ss: number, ms: number | null, f: number | null, p: number | null, eta: number | null): AnovaRow {
  return { source, label, df, ss, ms, f, p, partialEtaSquared: eta };
}

function downsample<T>(items: T[], max: number): T[] {
  if (items.length <= max) return items;
  // Even stride keeping both ends, so the shape of the distribution survives.
  const out: T[] = [];
  for (let i = 0; i < max; i++) out.push(items[Math.round((i * (items.length - 1)) / (max - 1))] as T);
  return out;
}

function histogram(values: number[]): RunResult['normality']['histogram'] {
  const min = Math.min(...values);
  const max = Math.max(...values);
  // Sturges' rule for the bin count (Sturges, JASA 1926), capped for the chart.
  const bins = Math.min(40, Math.ceil(Math.log2(values.length)) + 1);
  const width = (max - min) / bins || 1;
  const out = Array.from({ length: bins }, (_, i) => ({ from: min + i * width, to: min + (i + 1) * width, count: 0 }));
  for (const v of values) out[Math.min(bins - 1, Math.floor((v - min) / width))]!.count++;
  return out;
}

function fmt(x: number, d = 2): string {
  return Number.isFinite(x) ? x.toFixed(d) : String(x);
}
/** 'p = 0.0123' or 'p < 0.0001'. */
const fmtP = (p: number) => (p < 0.0001 ? 'p < 0.0001' : `p = ${p.toFixed(4)}`);

function statsError(error: unknown): never {
  if (error instanceof RangeError || error instanceof TypeError) {
    throw new AppError('precondition_failed', `The model cannot be fitted on the recorded data: ${error.message}`);
  }
  throw error;
}

export function computeRun(input: ComputeInput): RunResult {
  const { design, spec } = input;
  const alpha = spec.alpha;
  const armById = new Map(design.arms.map((a) => [a.id, a]));
  const { terms, blocked } = chooseTerms(input);

  // Complete cases: an arm, the outcome and every model term's value.
  let missingOutcome = 0;
  let missingCovariate = 0;
  const complete: Array<{ row: RawRow; arm: (typeof design.arms)[number]; values: Array<number | string> }> = [];
  for (const row of input.rows) {
    const arm = row.armId ? armById.get(row.armId) : undefined;
    if (!arm) continue;
    if (row.outcome === null) {
      missingOutcome++;
      continue;
    }
    const values = terms.map((t) => rawValue(row, t));
    if (values.some((v) => v === null)) {
      missingCovariate++;
      continue;
    }
    complete.push({ row, arm, values: values as Array<number | string> });
  }
  // Arm order of the design, then participant code: a stable order for charts and group levels.
  complete.sort((a, b) => a.arm.position - b.arm.position || a.row.code.localeCompare(b.row.code));
  const n = complete.length;
  const armsPresent = design.arms.filter((a) => complete.some((c) => c.arm.id === a.id));
  if (armsPresent.length < 2) {
    throw new AppError('precondition_failed', `The analysis needs outcomes in at least two arms; ${n} participant(s) have complete data`);
  }

  // Design columns: continuous and binary enter linearly; categorical factors and site as indicators.
  const columns: Column[] = [];
  const covariates: Record<string, number[]> = {};
  terms.forEach((term, j) => {
    if (term.kind === 'continuous' || term.kind === 'binary') {
      const name = safeName(term.key);
      columns.push({ name, term, level: null, label: term.label });
      covariates[name] = complete.map((c) => c.values[j] as number);
      return;
    }
    const observed = [...new Set(complete.map((c) => String(c.values[j])))];
    const defined = term.kind === 'categorical' ? (design.covariates.find((c) => c.key === term.key)?.levels ?? []) : design.sites.map((s) => s.code);
    const levels = [...defined.filter((l) => observed.includes(l)), ...observed.filter((l) => !defined.includes(l))];
    // The first level present is the reference.
    for (const level of levels.slice(1)) {
      const name = safeName(`${term.key}=${level}`);
      columns.push({ name, term, level, label: `${term.label}: ${level}` });
      covariates[name] = complete.map((c) => (String(c.values[j]) === level ? 1 : 0));
    }
  });
  const outcome = complete.map((c) => c.row.outcome as number);
  const group = complete.map((c) => c.arm.code);
  const byArm = armsPresent.map((a) => complete.map((c, i) => (c.arm.id === a.id ? i : -1)).filter((i) => i >= 0));

  let fit: AncovaResult;
  let unadjusted: ReturnType<typeof oneWayAnova>;
  try {
    fit = ancova({ outcome, group, covariates });
    unadjusted = oneWayAnova(byArm.map((idx) => idx.map((i) => outcome[i] as number)));
  } catch (error) {
    statsError(error);
  }
  const k = armsPresent.length;
  const parameters = k + columns.length;
  const dfE = fit.error.df;
  const tcrit = tQuantile(1 - alpha / 2, dfE);
  const confidenceLevel = 1 - alpha;
  const colByName = new Map(columns.map((c) => [c.name, c]));
  const armByCode = new Map(armsPresent.map((a) => [a.code, a]));
  const groupTerm = fit.terms.find((t) => t.term === 'group')!;

  const unadjustedRows = [
    anovaRow('group', 'Arm', unadjusted.between.df, unadjusted.between.ss, unadjusted.between.ms, unadjusted.between.f, unadjusted.between.p,
      unadjusted.between.ss / (unadjusted.between.ss + unadjusted.within.ss)),
    anovaRow('error', 'Error (within arms)', unadjusted.within.df, unadjusted.within.ss, unadjusted.within.ms, null, null, null),
    anovaRow('total', 'Total', unadjusted.total.df, unadjusted.total.ss, null, null, null, null),
  ];
  const adjustedRows = [
    ...fit.terms.map((t) =>
      anovaRow(t.term, t.term === 'group' ? 'Arm (adjusted)' : (colByName.get(t.term)?.label ?? t.term), t.df, t.ss, t.ms, t.f, t.p, t.partialEtaSquared),
    ),
    anovaRow('error', 'Error', fit.error.df, fit.error.ss, fit.error.ms, null, null, null),
    anovaRow('total', 'Total', fit.total.df, fit.total.ss, null, null, null, null),
  ];

  const rawMeans = new Map(unadjusted.groups.map((g, i) => [armsPresent[i]!.code, g]));
  const adjustedMeans = fit.adjustedMeans.map((m) => {
    const arm = armByCode.get(String(m.group))!;
    return {
      armId: arm.id, code: arm.code, name: arm.name, n: m.n, mean: m.mean, se: m.se,
      lower: m.mean - tcrit * m.se, upper: m.mean + tcrit * m.se, rawMean: rawMeans.get(arm.code)!.mean,
    };
  });
  const differences = fit.pairwise.map((d) => ({
    a: String(d.a), b: String(d.b), label: `${String(d.a)} minus ${String(d.b)}`,
    difference: d.difference, se: d.se, lower: d.difference - tcrit * d.se, upper: d.difference + tcrit * d.se, p: d.p,
  }));
  const slopes = fit.slopes.map((s) => ({
    column: s.covariate, label: colByName.get(s.covariate)?.label ?? s.covariate,
    estimate: s.estimate, se: s.se, lower: s.estimate - tcrit * s.se, upper: s.estimate + tcrit * s.se, p: s.p,
  }));

  // Variance partition by model term (indicator columns of one factor summed; sequential SS add up).
  const partition: RunResult['partition'] = [];
  for (const part of fit.partition) {
    const col = colByName.get(part.source);
    const source = part.source === 'group' ? 'group' : part.source === 'error' ? 'error' : (col?.term.key ?? part.source);
    const label = part.source === 'group' ? 'Arm (adjusted)' : part.source === 'error' ? 'Error' : (col?.term.label ?? part.source);
    const hit = partition.find((p) => p.source === source);
    if (hit) {
      hit.ss += part.ss;
      hit.share += part.share;
    } else partition.push({ source, label, ss: part.ss, share: part.share });
  }

  // ---- Assumption checks on the residuals ----
  const residuals = fit.residuals;
  const resByArm = byArm.map((idx) => idx.map((i) => residuals[i] as number));
  const sum = summarize(residuals);
  let sw: { w: number; p: number } | null = null;
  if (n >= 3 && n <= 5000) {
    try {
      const r = shapiroWilk(residuals);
      sw = { w: r.w, p: r.p };
    } catch {
      sw = null;
    }
  }
  const sorted = [...residuals].sort((a, b) => a - b);
  // Blom plotting positions (Blom 1958): (i - 3/8) / (n + 1/4).
  const qq = downsample(
    sorted.map((r, i) => ({ theoretical: normalQuantile((i + 1 - 0.375) / (n + 0.25)), sample: r / fit.rootMse })),
    MAX_QQ,
  );
  let levene: RunResult['levene'] = null;
  try {
    const l = leveneTest(resByArm, { center: 'median' });
    levene = { statistic: l.statistic, df1: l.df1, df2: l.df2, p: l.p, center: l.center };
  } catch {
    levene = null;
  }
  let sdRatio: RunResult['sdRatio'] = null;
  try {
    const s = sdRatioRule(resByArm);
    sdRatio = { ratio: s.ratio, flagged: s.flagged, threshold: s.threshold, sds: s.sds.map((sd, i) => ({ code: armsPresent[i]!.code, sd })) };
  } catch {
    sdRatio = null;
  }
  const continuousCols = columns.filter((c) => c.term.kind === 'continuous');
  let slopeHomogeneity: RunResult['slopeHomogeneity'] = null;
  let slopeError: string | null = null;
  if (continuousCols.length) {
    try {
      const s = slopeHomogeneityTest({ outcome, group, covariates: Object.fromEntries(continuousCols.map((c) => [c.name, covariates[c.name]!])) });
      slopeHomogeneity = {
        f: s.f, df1: s.df1, df2: s.df2, p: s.p, covariates: continuousCols.map((c) => c.label),
        groupSlopes: s.groupSlopes.map((g) => ({ code: String(g.group), covariate: colByName.get(g.covariate)?.label ?? g.covariate, slope: g.slope })),
      };
    } catch (error) {
      slopeError = error instanceof Error ? error.message : String(error);
    }
  }

  // ---- Linearity: outcome on the baseline of the outcome (or the first continuous covariate), per arm ----
  const xCol = continuousCols.find((c) => c.term.role === 'baseline_outcome') ?? continuousCols[0];
  let linearity: RunResult['linearity'] = null;
  if (xCol) {
    const xs = covariates[xCol.name]!;
    const b = fit.slopes.find((s) => s.covariate === xCol.name)!.estimate;
    const xbar = fit.covariateMeans[xCol.name]!;
    linearity = {
      covariate: { key: xCol.term.key, label: xCol.term.label, unit: xCol.term.unit },
      totalPoints: n,
      downsampled: byArm.some((idx) => idx.length > MAX_SCATTER_PER_GROUP),
      groups: armsPresent.map((arm, g) => {
        const idx = byArm[g]!;
        const gx = idx.map((i) => xs[i]!);
        const gy = idx.map((i) => outcome[i]!);
        let within: { intercept: number; slope: number } | null = null;
        try {
          const design2 = new Float64Array(gx.length * 2);
          gx.forEach((x, i) => {
            design2[i] = 1;
            design2[gx.length + i] = x;
          });
          const lf = leastSquares({ x: design2, n: gx.length, p: 2, y: gy, columnNames: ['intercept', xCol.name] });
          within = { intercept: lf.coefficients[0]!, slope: lf.coefficients[1]! };
        } catch {
          within = null;
        }
        const adj = adjustedMeans.find((m) => m.code === arm.code)!;
        const pts = downsample(
          gx.map((x, i) => [x, gy[i]!] as [number, number]).sort((p, q) => p[0] - q[0]),
          MAX_SCATTER_PER_GROUP,
        );
        return {
          code: arm.code, name: arm.name, points: pts, withinGroupLine: within,
          commonSlopeLine: { intercept: adj.mean - b * xbar, slope: b },
          xMin: Math.min(...gx), xMax: Math.max(...gx),
        };
      }),
    };
  }

  // ---- Change scores, for non-randomized groups (caution 8) ----
  let changeScore: RunResult['changeScore'] = null;
  const baseCol = columns.find((c) => c.term.role === 'baseline_outcome' && c.term.kind === 'continuous');
  if (design.kind === 'observational_cohort' && baseCol) {
    const base = covariates[baseCol.name]!;
    const change = outcome.map((y, i) => y - base[i]!);
    try {
      const cs = ancova({ outcome: change, group, covariates: {} });
      const d = cs.pairwise[0]!;
      const adjD = fit.pairwise[0]!;
      const baselineSmd =
        k === 2 ? standardizedMeanDifference(byArm[0]!.map((i) => base[i]!), byArm[1]!.map((i) => base[i]!), { kind: 'continuous' }) : null;
      changeScore = {
        baselineKey: baseCol.term.key,
        groups: armsPresent.map((arm, g) => {
          const s = summarize(byArm[g]!.map((i) => change[i]!));
          return { code: arm.code, n: s.n, meanChange: s.mean, sd: s.sd };
        }),
        difference: { a: String(d.a), b: String(d.b), estimate: d.difference, se: d.se, lower: d.difference - tcrit * d.se, upper: d.difference + tcrit * d.se, p: d.p },
        ancovaDifference: adjD.difference,
        baselineSmd,
        explanation:
          `Change-score analysis: ${String(d.a)} minus ${String(d.b)} in mean change = ${fmt(d.difference)}; ANCOVA adjusted difference = ${fmt(adjD.difference)}. ` +
          'The two agree in expectation only when the groups are equal at baseline (as randomization makes them). With pre-existing groups that differ at baseline they answer different questions and can disagree; that is Lord\'s paradox (Lord 1967; van Breukelen 2006).',
      };
    } catch {
      changeScore = null;
    }
  }

  // ---- Checks panel ----
  const siteInModel = terms.some((t) => t.kind === 'site');
  const checks: AssumptionCheck[] = [
    {
      id: 'independence',
      title: 'Independence of observations',
      status: 'recorded',
      summary:
        design.kind === 'randomized_trial'
          ? `By design: each participant was allocated individually (${design.allocation ? design.allocation.method.replace('_', ' ') : 'allocation recorded'}) and contributes one outcome. Participants of one site may resemble each other; site is ${siteInModel ? '' : 'not '}in the model.`
          : `By design: one outcome per participant in a cohort; groups were not randomized. Participants of one clinic may resemble each other; site is ${siteInModel ? '' : 'not '}in the model.`,
      source: 'Study design (recorded, not tested)',
    },
    {
      id: 'normality',
      title: 'Normality of residuals',
      status:
        sw === null
          ? 'not_computed'
          : sw.p < 0.05 || Math.abs(sum.skewness ?? 0) > 1 || Math.abs(sum.excessKurtosis ?? 0) > 2
            ? 'attention'
            : 'pass',
      summary:
        (sw ? `Shapiro-Wilk W = ${fmt(sw.w, 4)}, ${fmtP(sw.p)}; ` : `Shapiro-Wilk not computed (n = ${n}, needs 3 to 5000); `) +
        `skewness ${fmt(sum.skewness ?? NaN)}, excess kurtosis ${fmt(sum.excessKurtosis ?? NaN)}. With large samples the test flags trivial departures: read the Q-Q plot. Attention at p < 0.05, |skewness| > 1 or |excess kurtosis| > 2.`,
      source: 'Shapiro & Wilk, Biometrika 1965; Royston, Stat Comput 1992; skewness/kurtosis limits: common practice',
    },
    {
      id: 'variance',
      title: 'Equal residual variance across arms (Levene, median-centred)',
      status: levene === null ? 'not_computed' : levene.p < 0.05 ? 'attention' : 'pass',
      summary: levene
        ? `F(${levene.df1}, ${levene.df2}) = ${fmt(levene.statistic)}, ${fmtP(levene.p)} on the residuals by arm.${fit.robust.available ? ` HC3-robust F for the arm effect: ${fmt(fit.robust.groupWald.f)}, ${fmtP(fit.robust.groupWald.p)}.` : ''}`
        : 'Not computed on these data.',
      source: 'Levene 1960; Brown & Forsythe, JASA 1974;69:364',
    },
    {
      id: 'sd_ratio',
      title: 'Largest residual SD under twice the smallest',
      status: sdRatio === null ? 'not_computed' : sdRatio.flagged ? 'attention' : 'pass',
      summary: sdRatio ? `Ratio ${fmt(sdRatio.ratio)} (${sdRatio.sds.map((s) => `${s.code} ${fmt(s.sd)}`).join(', ')}); flagged at ${sdRatio.threshold}.` : 'Not computed.',
      source: 'common practice (rule of thumb, no single published source)',
    },
    {
      id: 'linearity',
      title: 'Linear relation of outcome and covariate within each arm',
      status: linearity ? 'review' : 'not_computed',
      summary: linearity
        ? `Look at the scatter of the outcome against ${linearity.covariate.label} with each arm's own line and the common-slope line; curvature or outliers need the statistician's judgement.`
        : 'No continuous covariate in the model.',
      source: 'Visual check (no test)',
    },
    {
      id: 'slopes',
      title: 'Homogeneity of regression slopes (arm × covariate)',
      status: slopeHomogeneity === null ? 'not_computed' : slopeHomogeneity.p < alpha ? 'attention' : 'pass',
      summary: slopeHomogeneity
        ? `F(${slopeHomogeneity.df1}, ${slopeHomogeneity.df2}) = ${fmt(slopeHomogeneity.f)}, ${fmtP(slopeHomogeneity.p)} at alpha ${alpha}; tested in the model with the continuous covariates (${slopeHomogeneity.covariates.join(', ')}).`
        : slopeError
          ? `Not computed: ${slopeError}`
          : 'No continuous covariate in the model.',
      source: 'Montgomery, Design and Analysis of Experiments, §15.3; Kutner et al., ALSM §22.4 (memory)',
    },
  ];

  // ---- Cautions ----
  const cautions: Caution[] = [];
  const push = (c: Caution | null) => {
    if (c) cautions.push(c);
  };
  if (input.exploratory) push(C.changedAfterLock({ firstLockedVersion: input.firstLockedVersion, version: input.specVersion, reason: input.reason }));
  push(C.postRandomization(blocked.map((b) => ({ key: b.key, label: b.label, count: b.valuesAfterRandomization })), design.kind, 'run'));
  push(C.strataLeftOut(input.factors, spec, blocked.map((b) => b.key)));
  push(C.tooManyParameters(parameters, n));
  if (slopeHomogeneity) push(C.slopesDiffer(slopeHomogeneity.f, slopeHomogeneity.df1, slopeHomogeneity.df2, slopeHomogeneity.p, alpha, slopeHomogeneity.covariates));
  push(C.observationalGroups(design.kind, changeScore?.baselineSmd ?? null));
  push(C.reliability(terms.filter((t) => t.kind === 'continuous').map((t) => ({ label: t.label, reliability: t.reliability })), design.kind));
  push(C.thresholdEnrollment(design, [...terms.map((t) => t.key), ...blocked.map((b) => b.key)]));
  push(C.completeCases(missingOutcome, missingCovariate));

  const roleText = { baseline_outcome: 'baseline of the outcome', adjustment: 'adjustment covariate', stratification: 'stratification factor' } as const;
  return {
    specVersion: input.specVersion,
    spec,
    exploratory: input.exploratory,
    reason: input.reason,
    studyKind: design.kind,
    alpha,
    confidenceLevel,
    data: {
      itt: input.rows.length,
      analysed: n,
      missingOutcome,
      missingCovariate,
      method: 'Complete cases of the intention-to-treat population (enrolled and withdrawn participants, analysed in the arm they were allocated to).',
    },
    model: {
      terms: terms.map((t) => ({ key: t.key, label: t.label, role: t.role, columns: columns.filter((c) => c.term === t).map((c) => c.name) })),
      blocked,
      parameters,
      description:
        `${spec.outcome.label} = arm` +
        (terms.length ? ` + ${terms.map((t) => `${t.label} (${roleText[t.role]}${t.kind === 'categorical' || t.kind === 'site' ? ', indicators' : ', linear'})`).join(' + ')}` : '') +
        '; common slopes, least squares, Type III sums of squares.',
    },
    groups: armsPresent.map((arm, g) => ({ armId: arm.id, code: arm.code, name: arm.name, n: unadjusted.groups[g]!.n, mean: unadjusted.groups[g]!.mean, sd: unadjusted.groups[g]!.sd })),
    unadjusted: { rows: unadjustedRows, errorMeanSquare: unadjusted.within.ms },
    adjusted: { rows: adjustedRows, errorMeanSquare: fit.error.ms, rSquared: fit.rSquared },
    errorMeanSquareRatio: fit.error.ms / unadjusted.within.ms,
    groupEffect: {
      unadjusted: { f: unadjusted.between.f, p: unadjusted.between.p },
      adjusted: { f: groupTerm.f, p: groupTerm.p, partialEtaSquared: groupTerm.partialEtaSquared },
    },
    adjustedMeans,
    differences,
    slopes,
    partition,
    robust: fit.robust.available ? { method: 'HC3', ...fit.robust.groupWald } : null,
    checks,
    normality: { shapiroWilk: sw, skewness: sum.skewness, excessKurtosis: sum.excessKurtosis, residualSd: fit.rootMse, qq, histogram: histogram(residuals) },
    levene,
    sdRatio,
    slopeHomogeneity,
    linearity,
    changeScore,
    cautions,
    note: analysisNote,
  };
}
