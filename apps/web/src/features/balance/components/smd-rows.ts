import type { BalanceArmsView, BalanceFlags } from '@counterpoise/contracts/balance';
import { comparisonLabel } from './format.js';

/** One covariate and one comparison (arm vs reference): what the dot chart draws per row. */
export type SmdRow = {
  id: string;
  key: string;
  label: string;
  kind: 'continuous' | 'binary' | 'categorical';
  isAdjustment: boolean;
  isStratification: boolean;
  comparison: string;
  smd: number | null;
  varianceRatio: number | null;
  halfWidth: number | null;
  nArm: number;
  nReference: number;
  flags: BalanceFlags;
  note: string | null;
  /** Cohorts with weighting: SMD before and after weighting (before equals `smd`). */
  before: number | null;
  after: number | null;
};

export function smdRows(view: BalanceArmsView): SmdRow[] {
  const weighted = view.weighting?.status === 'ok' ? view.weighting : null;
  const multi = view.arms.length > 2;
  return view.covariates.flatMap((covariate) =>
    covariate.balance.comparisons.map((c) => {
      const w = weighted?.covariates.find((x) => x.key === covariate.key);
      const comparison = comparisonLabel(view.arms, c.armId, c.referenceArmId);
      return {
        id: `${covariate.key}:${c.armId}`,
        key: covariate.key,
        label: multi ? `${covariate.label} (${comparison})` : covariate.label,
        kind: covariate.kind,
        isAdjustment: covariate.isAdjustment,
        isStratification: covariate.isStratification,
        comparison,
        smd: c.smd,
        varianceRatio: c.varianceRatio,
        halfWidth: c.chanceBand?.halfWidth ?? null,
        nArm: c.nArm,
        nReference: c.nReference,
        flags: c.flags,
        note: c.note,
        before: w ? w.smdBefore : null,
        after: w ? w.smdAfter : null,
      };
    }),
  );
}
