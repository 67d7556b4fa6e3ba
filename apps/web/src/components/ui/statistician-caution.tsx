import { Callout } from './callout.js';

export const statisticianCautionText =
  "Results support, and do not replace, the judgement of the study's statistician, the protocol and the applicable regulations and ethics approvals.";

/** The standing note every analysis screen and report carries (DOMAIN.md, "Cautions to show"). */
export function StatisticianCaution({ className }: { className?: string }) {
  return (
    <Callout tone="caution" role="note" className={className}>
      <p data-testid="statistician-caution">{statisticianCautionText}</p>
    </Callout>
  );
}
