import type { AnalysisSpec, Caution } from '@counterpoise/contracts/analysis';
import type { StudyDesign } from '../design/study-design.js';
import type { StrataFactor } from './analysis-data.js';

/**
 * The cautions of DOMAIN.md (3-10) as shown on the Analysis tab and carried in every run.
 * Texts state the rule and its source; a rule of thumb without a published source says
 * "common practice".
 */

/** 'p = 0.0123' or 'p < 0.0001'. */
const fmtP = (p: number) => (p < 0.0001 ? 'p < 0.0001' : `p = ${p.toFixed(4)}`);

/** Covariate keys the spec names (baseline of the outcome first). */
export function specCovariateKeys(spec: AnalysisSpec): string[] {
  return [...(spec.baselineCovariateKey ? [spec.baselineCovariateKey] : []), ...spec.covariates.map((c) => c.key)];
}

export function changedAfterLock(opts: { firstLockedVersion: number | null; version: number; reason: string | null }): Caution {
  const what =
    opts.firstLockedVersion === null
      ? `The specification (version ${opts.version}) has not been locked, so nothing was pre-specified.`
      : `The specification was changed after it was locked: version ${opts.firstLockedVersion} is the locked, pre-specified analysis and this uses version ${opts.version}.`;
  return {
    number: 3,
    code: 'changed_after_lock',
    severity: 'warning',
    title: 'Exploratory analysis',
    message: `${what} The run is exploratory, not the primary analysis, and needs a reason${opts.reason ? ` (given: "${opts.reason}")` : ''}.`,
    source: 'ICH E9 5.1 and 5.7 (pre-specification); EMA guideline on adjustment for baseline covariates (2015)',
  };
}

export function postRandomization(items: { key: string; label: string; count: number }[], kind: StudyDesign['kind'], when: 'spec' | 'run'): Caution | null {
  if (items.length === 0) return null;
  const anchor = kind === 'randomized_trial' ? 'randomization' : 'enrollment';
  const list = items.map((i) => `${i.label} (${i.count} value${i.count === 1 ? '' : 's'} dated after ${anchor})`).join('; ');
  return {
    number: 4,
    code: 'post_randomization_covariate',
    severity: 'blocked',
    title: `Covariate measured after ${anchor}: kept out of the primary model`,
    message:
      `${list}. A covariate measured after ${anchor} can be affected by the treatment, so adjusting for it can bias the comparison. ` +
      (when === 'run'
        ? 'It was left out of this model; the other terms were fitted as specified.'
        : 'A run will leave it out of the model. Check the measurement dates, or choose a covariate measured before randomization.'),
    source: 'ICH E9 5.7',
  };
}

export function strataLeftOut(factors: StrataFactor[], spec: AnalysisSpec, blocked: string[]): Caution | null {
  if (factors.length === 0) return null;
  const inModel = new Set(spec.includeStratificationFactors ? factors.map((f) => f.key) : specCovariateKeys(spec));
  for (const k of specCovariateKeys(spec)) inModel.add(k);
  const out = factors.filter((f) => !inModel.has(f.key) || blocked.includes(f.key));
  if (out.length === 0) return null;
  return {
    number: 5,
    code: 'stratification_left_out',
    severity: 'warning',
    title: 'Stratification factor left out of the model',
    message: `${out.map((f) => f.label).join(', ')} ${out.length === 1 ? 'was' : 'were'} used at randomization but ${out.length === 1 ? 'is' : 'are'} not in the model. Factors used to stratify the randomization should normally be adjusted for; leaving them out makes the standard errors too large and the analysis not match the design.`,
    source: 'ICH E9 2.3.1; EMA guideline on adjustment for baseline covariates (2015)',
  };
}

/** Fewer than 10 participants per model parameter. The threshold is common practice, not a published rule. */
export function tooManyParameters(parameters: number, n: number): Caution | null {
  if (n >= 10 * parameters) return null;
  return {
    number: 6,
    code: 'many_parameters',
    severity: 'warning',
    title: 'Many model parameters for the number of participants',
    message: `The model has ${parameters} parameters for ${n} participants (${(n / Math.max(parameters, 1)).toFixed(1)} per parameter). With few participants per parameter the estimates are unstable; keep to one or two covariates in small samples. The flag at fewer than 10 per parameter is common practice.`,
    source: 'common practice',
  };
}

export function slopesDiffer(f: number, df1: number, df2: number, p: number, alpha: number, covariates: string[]): Caution | null {
  if (!(p < alpha)) return null;
  return {
    number: 7,
    code: 'slopes_differ',
    severity: 'warning',
    title: 'The arms have different slopes: the common-slope ANCOVA is not representative',
    message: `The arm-by-covariate interaction is significant (F(${df1}, ${df2}) = ${f.toFixed(2)}, ${fmtP(p)}, for ${covariates.join(', ')}). The common-slope ANCOVA assumes the same slope in every arm; here that does not hold, so the single adjusted difference does not describe the data: the difference between arms depends on the covariate value. Look at the per-arm lines below; how to report it is the statistician's decision under the protocol.`,
    source: 'Homogeneity of regression slopes: Montgomery, Design and Analysis of Experiments, §15.3 (memory)',
  };
}

export function observationalGroups(kind: StudyDesign['kind'], baselineSmd: number | null): Caution | null {
  if (kind !== 'observational_cohort') return null;
  const differ = baselineSmd !== null && Math.abs(baselineSmd) >= 0.1;
  return {
    number: 8,
    code: 'non_randomized_groups',
    severity: 'warning',
    title: "Non-randomized groups: ANCOVA and change scores can disagree (Lord's paradox)",
    message:
      `The groups were not formed by randomization${baselineSmd !== null ? ` and ${differ ? 'differ' : 'differ little'} at baseline (SMD ${baselineSmd.toFixed(2)} on the baseline value of the outcome)` : ''}. ` +
      'The ANCOVA answers a conditional question, "how would the groups differ at follow-up had they been equal at baseline?", and can disagree with a change-score analysis, "did the groups change by different amounts?". Both are shown below. Neither settles the causal question without assumptions about how the groups were formed; randomization, or matching on baseline, is the remedy where it is possible.',
    source: 'Lord, Psychol Bull 1967;68:304; van Breukelen, J Clin Epidemiol 2006;59:920',
  };
}

export function reliability(items: { label: string; reliability: number | null }[], kind: StudyDesign['kind']): Caution | null {
  const low = items.filter((i) => i.reliability !== null && i.reliability < 1);
  const unknown = items.filter((i) => i.reliability === null);
  if (low.length === 0 && unknown.length === 0) return null;
  const parts: string[] = [];
  if (low.length) parts.push(`Reliability below 1: ${low.map((i) => `${i.label} (${i.reliability!.toFixed(2)})`).join(', ')}.`);
  if (unknown.length) parts.push(`Reliability not recorded: ${unknown.map((i) => i.label).join(', ')}; ask for it (for example a test-retest coefficient).`);
  parts.push(
    kind === 'randomized_trial'
      ? 'In a randomized trial a covariate measured with error only costs precision: the comparison of arms stays unbiased.'
      : 'In an observational cohort a covariate measured with error leaves residual confounding: the adjustment removes only part of the baseline difference (regression dilution).',
  );
  return {
    number: 9,
    code: 'covariate_reliability',
    severity: kind === 'randomized_trial' || low.length === 0 ? 'info' : 'warning',
    title: 'Covariates measured with error',
    message: parts.join(' '),
    source: 'Hutcheon, Chiolero & Hanley, BMJ 2010;340:c2289',
  };
}

export function thresholdEnrollment(design: StudyDesign, modelKeys: string[]): Caution | null {
  const hits = design.eligibility.filter((c) => ['<', '<=', '>', '>='].includes(c.op) && modelKeys.includes(c.field));
  if (hits.length === 0) return null;
  return {
    number: 10,
    code: 'threshold_enrollment',
    severity: 'warning',
    title: 'Enrollment by a baseline threshold: regression to the mean',
    message: `Participants were enrolled by a threshold on a baseline value (${hits.map((h) => `${h.label}: ${h.field} ${h.op} ${String(h.value)}`).join('; ')}). Values selected for being extreme tend to move back towards the mean at follow-up in every arm, with or without treatment. Within-arm change from baseline therefore overstates any effect; compare the arms with the ANCOVA, not each arm's change. This concerns values that vary within a person (measurement error, day-to-day variation), not fixed ones such as age.`,
    source: 'Barnett, van der Pols & Dobson, Int J Epidemiol 2005;34:215 (memory); Senn, Stat Med 2006 (memory)',
  };
}

export function completeCases(missingOutcome: number, missingCovariate: number): Caution | null {
  if (missingOutcome === 0 && missingCovariate === 0) return null;
  return {
    number: 0,
    code: 'complete_cases',
    severity: 'info',
    title: 'Participants left out for missing data',
    message: `${missingOutcome} participant(s) without the outcome and ${missingCovariate} without a model covariate are left out: this is a complete-case analysis of the intention-to-treat population. Whether that fits the protocol's estimand and its strategy for missing data is the statistician's decision.`,
    source: 'ICH E9(R1) addendum on estimands (2019)',
  };
}
