import { ALLOCATION_ALGORITHM_VERSION } from '../allocationAlgorithmVersion/allocationAlgorithmVersion.js';
import { checkNumber, checkOption } from '../inputChecks/inputChecks.js';
import { checkArms, checkRatio } from '../permutedBlockSequence/permutedBlockSequence.js';
import type { Rng } from '../createRng/createRng.js';

export type ImbalanceMeasure = 'range' | 'variance';

export type MinimizationInput = {
  /**
   * Arm labels. Optional: when omitted they are read from `counts` (every arm key under every
   * factor and level, in order of first appearance), so counts must then name each arm at least
   * once (a zero count is enough).
   */
  arms?: string[];
  /** Allocation ratio per arm (default 1 each). */
  ratio?: number[];
  /** Names of the minimization factors, e.g. ['site', 'sex', 'ageBand']. */
  factors: string[];
  /** The new participant's level of each factor (a number is read as its string key). */
  levels: Record<string, string | number>;
  /** counts[factor][level][arm]: participants already allocated with that level (missing = 0). */
  counts: Record<string, Record<string, Record<string, number>>>;
  /** Weight per factor (default 1), keyed by factor or as an array in `factors` order. */
  weights?: Record<string, number> | number[];
  /** Probability of the preferred (least-imbalancing) arm, 1/arms < probability < 1. */
  probability: number;
  /** Default 'range' (the measure of Pocock & Simon's worked example). */
  imbalance?: ImbalanceMeasure;
  /** A seeded generator (createRng) or any function returning uniform draws in [0, 1). */
  random: Rng | (() => number);
};

export type MinimizationDecision = {
  algorithm: 'minimization';
  version: string;
  assigned: string;
  preferred: string;
  /** Arms sharing the smallest total imbalance; the preferred one was drawn among them. */
  tiedArms: string[];
  /** Total weighted imbalance G(a) if the participant joined arm a. */
  scores: Record<string, number>;
  /** Per-factor imbalance d_f(a) if the participant joined arm a (before weighting). */
  factorImbalance: Record<string, Record<string, number>>;
  /** Assignment probabilities used for this participant. */
  probabilities: Record<string, number>;
  /** The uniform draws used: for the tie-break (null when there was no tie) and the assignment. */
  draws: { tieBreak: number | null; assignment: number };
  imbalance: ImbalanceMeasure;
  probability: number;
  ratio: number[];
};

const FN = 'minimizationAssign';
const MEASURES: readonly ImbalanceMeasure[] = ['range', 'variance'];

/**
 * Pocock & Simon (Biometrics 1975;31:103) minimization for the next participant, with any number
 * of arms and unequal allocation ratios, and always a random element (ICH E9 requires that the
 * allocation is not deterministic; classic p = 3/4, Pocock 1979).
 *
 * For each candidate arm a, suppose the participant joins a. For each factor f take the counts
 * at the participant's level, add 1 to arm a, and divide each arm's count by its ratio r_k (so a
 * 2:1 design is "balanced" when the counts are 2:1). The factor imbalance d_f(a) is the range
 * (max - min) or the sample variance (denominator K - 1) of these adjusted counts, and
 *   G(a) = sum_f weight_f * d_f(a).
 * The preferred arm has the smallest G; ties are broken uniformly at random (first draw, only
 * when tied). The preferred arm is then assigned with `probability` and each other arm with
 * (1 - probability) / (K - 1) (second draw u: preferred when u < probability, otherwise the other
 * arms in `arms` order share [probability, 1) equally).
 *
 * Everything needed to audit the decision is returned: per-arm and per-factor imbalance, the
 * tie, the preferred arm, the probabilities and both draws.
 *
 * @throws {TypeError} an option has the wrong type; random is not a function or generator.
 * Omitted options: `arms` is read from `counts` (see the type), `ratio` is 1 for every arm,
 * `weights` 1 for every factor, `imbalance` 'range'; `probability` must always be given.
 *
 * @throws {RangeError} fewer than two arms or duplicates (or, without arms, counts naming fewer
 *   than two); ratio invalid; no factors; a factor
 *   without a level for the participant; a count that is negative, fractional or non-finite; a
 *   weight for an unknown factor or not finite and > 0; probability not in (1/arms, 1); unknown
 *   imbalance measure; a draw outside [0, 1).
 * @example
 * minimizationAssign({
 *   arms: ['A', 'B'], factors: ['sex'], levels: { sex: 'F' },
 *   counts: { sex: { F: { A: 3, B: 1 } } }, probability: 0.75, imbalance: 'range',
 *   random: createRng('demo'),
 * }); // preferred 'B' (scores A: 3, B: 1), assigned 'B' with probability 0.75
 */
export function minimizationAssign(input: MinimizationInput): MinimizationDecision {
  if (input === null || typeof input !== 'object') throw new TypeError(`${FN}: input must be an object`);
  const arms = checkArms(FN, input.arms === undefined ? armsFromCounts(input.factors, input.counts) : input.arms);
  const K = arms.length;
  const ratio = checkRatio(FN, input.ratio, K);
  const imbalance = checkOption(FN, 'imbalance', input.imbalance ?? 'range', MEASURES);
  const probability = checkNumber(FN, 'probability', input.probability, { min: 1 / K, max: 1, exclusiveMin: true, exclusiveMax: true });
  const draw = drawFunction(input.random);
  if (!Array.isArray(input.factors) || input.factors.length === 0) {
    throw new RangeError(`${FN}: factors must be a non-empty array of factor names`);
  }
  const factors = input.factors;
  const weights = weightsByFactor(factors, input.weights);
  for (const key of Object.keys(weights)) {
    if (!factors.includes(key)) throw new RangeError(`${FN}: weights.${key} is not one of the factors (${factors.join(', ')})`);
  }
  if (input.levels === null || typeof input.levels !== 'object') throw new TypeError(`${FN}: levels must be an object keyed by factor`);
  if (input.counts === null || typeof input.counts !== 'object') throw new TypeError(`${FN}: counts must be an object keyed by factor`);

  const factorImbalance: Record<string, Record<string, number>> = {};
  const scores: Record<string, number> = {};
  for (const a of arms) {
    factorImbalance[a] = {};
    scores[a] = 0;
  }
  for (const f of factors) {
    const rawLevel = input.levels[f];
    const level = typeof rawLevel === 'number' && Number.isFinite(rawLevel) ? String(rawLevel) : rawLevel;
    if (typeof level !== 'string') throw new RangeError(`${FN}: levels.${f} is missing; the participant needs a level for every factor`);
    const w = weights[f] === undefined ? 1 : checkNumber(FN, `weights.${f}`, weights[f], { min: 0, exclusiveMin: true });
    const byArm = input.counts[f]?.[level] ?? {};
    const base = arms.map((arm) => {
      const c = byArm[arm] ?? 0;
      return checkNumber(FN, `counts.${f}.${level}.${arm}`, c, { min: 0, integer: true });
    });
    arms.forEach((a, ai) => {
      const adjusted = base.map((c, k) => (c + (k === ai ? 1 : 0)) / (ratio[k] as number));
      const d = imbalance === 'range' ? Math.max(...adjusted) - Math.min(...adjusted) : sampleVariance(adjusted);
      (factorImbalance[a] as Record<string, number>)[f] = d;
      scores[a] = (scores[a] as number) + w * d;
    });
  }
  const min = Math.min(...arms.map((a) => scores[a] as number));
  // Scores are sums of a few ratios of small integers: compare with a tolerance so rounding
  // does not break a genuine tie.
  const tiedArms = arms.filter((a) => (scores[a] as number) - min <= 1e-9 * Math.max(1, Math.abs(min)));
  let tieBreak: number | null = null;
  let preferred = tiedArms[0] as string;
  if (tiedArms.length > 1) {
    tieBreak = draw('tieBreak');
    preferred = tiedArms[Math.min(tiedArms.length - 1, Math.floor(tieBreak * tiedArms.length))] as string;
  }
  const others = arms.filter((a) => a !== preferred);
  const probabilities: Record<string, number> = {};
  for (const a of arms) probabilities[a] = a === preferred ? probability : (1 - probability) / (K - 1);
  const u = draw('assignment');
  const assigned =
    u < probability ? preferred : (others[Math.min(K - 2, Math.floor(((u - probability) / (1 - probability)) * (K - 1)))] as string);
  return {
    algorithm: 'minimization',
    version: ALLOCATION_ALGORITHM_VERSION.minimization,
    assigned,
    preferred,
    tiedArms,
    scores,
    factorImbalance,
    probabilities,
    draws: { tieBreak, assignment: u },
    imbalance,
    probability,
    ratio,
  };
}

/** Arm labels named anywhere in counts[factor][level], in order of first appearance. */
function armsFromCounts(factors: unknown, counts: unknown): string[] {
  if (!Array.isArray(factors)) throw new RangeError(`${FN}: factors must be a non-empty array of factor names`);
  if (counts === null || typeof counts !== 'object') throw new TypeError(`${FN}: counts must be an object keyed by factor`);
  const seen = new Set<string>();
  for (const f of factors as unknown[]) {
    const byLevel = (counts as Record<string, unknown>)[String(f)];
    if (byLevel === null || typeof byLevel !== 'object') continue;
    for (const byArm of Object.values(byLevel as Record<string, unknown>)) {
      if (byArm !== null && typeof byArm === 'object') for (const a of Object.keys(byArm)) seen.add(a);
    }
  }
  if (seen.size < 2) {
    throw new RangeError(
      `${FN}: arms was not given and counts name ${seen.size} arm(s); pass arms, or list every arm (with a zero count) in counts`,
    );
  }
  return [...seen];
}

/** Weights keyed by factor; an array is read in `factors` order. */
function weightsByFactor(factors: string[], weights: unknown): Record<string, number> {
  if (weights === undefined) return {};
  if (Array.isArray(weights)) {
    if (weights.length !== factors.length) {
      throw new RangeError(`${FN}: weights has ${weights.length} entries but there are ${factors.length} factors`);
    }
    return Object.fromEntries(factors.map((f, i) => [f, weights[i] as number]));
  }
  if (weights === null || typeof weights !== 'object') throw new TypeError(`${FN}: weights must be an object keyed by factor, or an array in factors order`);
  return weights as Record<string, number>;
}

function sampleVariance(xs: number[]): number {
  const m = xs.reduce((a, b) => a + b, 0) / xs.length;
  return xs.reduce((a, x) => a + (x - m) ** 2, 0) / (xs.length - 1);
}

function drawFunction(random: unknown): (what: string) => number {
  let f: () => number;
  if (typeof random === 'function') f = random as () => number;
  else if (random !== null && typeof random === 'object' && typeof (random as Rng).next === 'function') {
    const rng = random as Rng;
    f = () => rng.next();
  } else throw new TypeError(`${FN}: random must be a createRng() generator or a function returning numbers in [0, 1)`);
  return (what) => {
    const u = f();
    if (typeof u !== 'number' || !(u >= 0 && u < 1)) throw new RangeError(`${FN}: random returned ${String(u)} for the ${what} draw; draws must be in [0, 1)`);
    return u;
  };
}
