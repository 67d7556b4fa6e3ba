import { balanceCautions, type BalanceArmsView, type Weighting } from '@counterpoise/contracts/balance';
import { Badge } from '../../../components/ui/badge.js';
import { Callout } from '../../../components/ui/callout.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { Table, TBody, TD, TH, THead, TR } from '../../../components/ui/table.js';
import { armLabel, formatNumber } from './format.js';
import { MirroredHistogram, type HistogramGroup } from './mirrored-histogram.js';

const estimandLabel: Record<Weighting['estimand'], string> = {
  ATE: 'inverse probability weights for the average effect in everyone (ATE)',
  ATT: 'weights for the average effect in the treated group (ATT)',
  overlap: 'overlap weights',
};

function pair(
  arms: BalanceArmsView['arms'],
  histograms: Weighting['propensityOverlap'],
): [HistogramGroup, HistogramGroup] | null {
  const [a, b] = histograms;
  if (!a || !b) return null;
  return [
    { label: armLabel(arms, a.armId), bins: a.bins },
    { label: armLabel(arms, b.armId), bins: b.bins },
  ];
}

/** Propensity overlap, the weights and their effective sample size, with caution 12. */
export function WeightingPanel({ view, weighting }: { view: BalanceArmsView; weighting: Weighting }) {
  const overlap = pair(view.arms, weighting.propensityOverlap);
  const weights = pair(view.arms, weighting.weightHistogram);
  // The weighting and judgement notes are already on screen; list only what is particular to this fit.
  const extra = weighting.cautions.filter(
    (c) => c !== balanceCautions.weighting && c !== balanceCautions.judgement,
  );
  return (
    <Card data-testid="weighting-panel">
      <CardHeader
        title="Propensity score and weights"
        description={`Model: ${weighting.modelTerms.join(' + ') || 'none'}; ${estimandLabel[weighting.estimand]}.`}
      />
      <CardBody className="flex flex-col gap-5">
        <Callout tone="caution" role="note" title="Weighting balances measured covariates only">
          <p data-testid="weighting-caution">{balanceCautions.weighting}</p>
          {extra.length > 0 && (
            <ul className="mt-1 list-disc pl-5">
              {extra.map((c) => (
                <li key={c}>{c}</li>
              ))}
            </ul>
          )}
        </Callout>
        {weighting.status !== 'ok' ? (
          <Callout tone="info" title="Weighting is not available for this snapshot">
            {weighting.note ?? 'The propensity model could not be fitted.'}
          </Callout>
        ) : (
          <>
            <div className="flex flex-wrap gap-2">
              {weighting.flags.extremeWeights && (
                <Badge tone="brick">
                  {weighting.extremeWeightCount} extreme weight{weighting.extremeWeightCount === 1 ? '' : 's'}
                </Badge>
              )}
              {weighting.flags.lowEffectiveSampleSize && (
                <Badge tone="brick">low effective sample size</Badge>
              )}
              {!weighting.flags.extremeWeights && !weighting.flags.lowEffectiveSampleSize && (
                <Badge tone="moss">no extreme weights; effective sample size adequate</Badge>
              )}
            </div>
            <div className="grid gap-6 xl:grid-cols-2">
              <section aria-label="Propensity score overlap" className="flex flex-col gap-2">
                <h3 className="text-sm font-semibold text-ink">Propensity-score overlap by group</h3>
                {overlap ? (
                  <MirroredHistogram
                    groups={overlap}
                    xLabel="Propensity score"
                    testId="propensity-overlap"
                    summary={`Propensity scores of ${overlap[0].label} (above) and ${overlap[1].label} (below) in ${overlap[0].bins.length} bins; the table gives the counts.`}
                  />
                ) : (
                  <p className="text-sm text-graphite">No propensity scores in this snapshot.</p>
                )}
              </section>
              <section aria-label="Weight distribution" className="flex flex-col gap-2">
                <h3 className="text-sm font-semibold text-ink">Weight distribution by group</h3>
                {weights ? (
                  <MirroredHistogram
                    groups={weights}
                    xLabel="Weight"
                    testId="weight-distribution"
                    summary={`Weights of ${weights[0].label} (above) and ${weights[1].label} (below); maximum weight ${formatNumber(weighting.maxWeight)}.`}
                  />
                ) : (
                  <p className="text-sm text-graphite">No weights in this snapshot.</p>
                )}
              </section>
            </div>
            <Table>
              <caption className="sr-only">Effective sample size and weights by group</caption>
              <THead>
                <TR>
                  <TH>Group</TH>
                  <TH className="text-right">n</TH>
                  <TH className="text-right">Effective sample size</TH>
                  <TH className="text-right">ESS / n</TH>
                </TR>
              </THead>
              <TBody>
                {weighting.effectiveSampleSize.map((e) => (
                  <TR key={e.armId}>
                    <TD>{armLabel(view.arms, e.armId)}</TD>
                    <TD className="figure text-right">{e.n}</TD>
                    <TD className="figure text-right">{formatNumber(e.ess, 1)}</TD>
                    <TD className="figure text-right">
                      {e.n > 0 ? `${((e.ess / e.n) * 100).toFixed(0)}%` : '—'}
                    </TD>
                  </TR>
                ))}
              </TBody>
            </Table>
            <p className="text-sm text-graphite">
              Maximum weight <span className="figure text-ink">{formatNumber(weighting.maxWeight)}</span>
              {weighting.extremeWeightThreshold !== null && (
                <>
                  ; weights above{' '}
                  <span className="figure text-ink">{formatNumber(weighting.extremeWeightThreshold)}</span>{' '}
                  count as extreme
                </>
              )}
              . Effective sample size is (Σw)² / Σw² (Kish 1965).
            </p>
          </>
        )}
      </CardBody>
    </Card>
  );
}
