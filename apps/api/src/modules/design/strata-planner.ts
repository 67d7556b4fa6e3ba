import type { StrataPlan } from '@counterpoise/contracts/design';

type PlannerInput = {
  targetSampleSize: number;
  siteCount: number;
  covariates: { key: string; kind: string; levels?: string[] | null; isStratification: boolean }[];
  allocation:
    | { method: 'permuted_blocks'; blockSizes: number[]; stratifyBySite: boolean }
    | { method: 'minimization'; factors: string[] }
    | { method: 'exposure_recorded' }
    | null;
};

/** Share of the target at which the worst-case imbalance bound is said to approach it (our threshold, common practice). */
const BOUND_SHARE_WARNING = 0.5;

/**
 * Strata planner. With K strata and block size B the overall imbalance between two arms is at
 * most K*B/2 (Hallstrom & Davis, Control Clin Trials 1988;9:375). It warns when that bound
 * approaches the target sample size, when strata would on average hold fewer participants
 * than one block (many strata then stop mid-block, and stratification buys little), and when
 * more than three factors are used (ICH E9 2.3.1 advises few).
 */
export function planStrata(input: PlannerInput): StrataPlan | null {
  const a = input.allocation;
  if (!a || a.method === 'exposure_recorded') return null;
  const warnings: StrataPlan['warnings'] = [];
  if (a.method === 'minimization') {
    if (a.factors.length > 3) {
      warnings.push({
        code: 'many_factors',
        message: `${a.factors.length} minimization factors: ICH E9 advises using few; consider at most 3.`,
      });
    }
    return {
      strataCount: 1,
      stratificationFactors: a.factors,
      maxBlockSize: null,
      worstCaseImbalance: null,
      perStratumAtTarget: input.targetSampleSize,
      warnings,
    };
  }
  const factors = input.covariates.filter((c) => c.isStratification);
  let strata = 1;
  for (const f of factors) strata *= f.kind === 'binary' ? 2 : Math.max(1, f.levels?.length ?? 1);
  if (a.stratifyBySite) strata *= Math.max(1, input.siteCount);
  const names = [...(a.stratifyBySite ? ['site'] : []), ...factors.map((f) => f.key)];
  const maxBlock = Math.max(...a.blockSizes);
  const bound = (strata * maxBlock) / 2;
  const perStratum = input.targetSampleSize / strata;
  if (bound >= BOUND_SHARE_WARNING * input.targetSampleSize) {
    warnings.push({
      code: 'imbalance_bound',
      message: `${strata} strata × block size ${maxBlock} / 2 = ${bound} participants of possible overall imbalance, against a target of ${input.targetSampleSize} (Hallstrom & Davis 1988). Use fewer strata or smaller blocks.`,
    });
  }
  if (perStratum < maxBlock) {
    warnings.push({
      code: 'sparse_strata',
      message: `About ${perStratum.toFixed(1)} participants per stratum at the target, fewer than one block of ${maxBlock}: many strata will stop mid-block.`,
    });
  }
  if (names.length > 3) {
    warnings.push({
      code: 'many_factors',
      message: `${names.length} stratification factors (${names.join(', ')}): ICH E9 advises at most 2-3.`,
    });
  }
  return {
    strataCount: strata,
    stratificationFactors: names,
    maxBlockSize: maxBlock,
    worstCaseImbalance: bound,
    perStratumAtTarget: Math.round(perStratum * 10) / 10,
    warnings,
  };
}
