import type { RunDto } from '@counterpoise/contracts/analysis';
import { Badge } from '../../../components/ui/badge.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { StatisticianCaution } from '../../../components/ui/statistician-caution.js';
import { Table, TBody, TD, TH, THead, TR } from '../../../components/ui/table.js';
import { AnovaComparison, EstimatesTables } from './anova-comparison.js';
import { CautionsPanel } from './cautions-panel.js';
import { ChecksPanel } from './checks-panel.js';
import { AdjustedMeansChart, VariancePartitionBar } from './estimate-charts.js';
import { num, pValue, utcTime } from './format.js';
import { LinearityChart } from './linearity-chart.js';
import { QqPlot, ResidualHistogram } from './residual-charts.js';

/** One stored run: the comparison, estimates, charts, assumption checks and cautions. */
export function RunResults({ run }: { run: RunDto }) {
  const r = run.result;
  return (
    <section aria-labelledby="run-heading" className="flex flex-col gap-5" data-testid="run-results">
      <div className="flex flex-wrap items-center gap-3">
        <h2 id="run-heading" className="text-lg font-semibold text-ink">
          Results of the run of {utcTime(run.runAt)}
        </h2>
        <Badge tone={run.exploratory ? 'ochre' : 'moss'}>
          {run.exploratory ? 'Exploratory' : 'Primary (pre-specified)'}
        </Badge>
        <Badge>Specification version {run.specVersion}</Badge>
      </div>
      <p className="text-sm text-graphite">
        Run by {run.runBy.name}. {r.data.analysed} of {r.data.itt} participants analysed (
        {r.data.missingOutcome} without the outcome, {r.data.missingCovariate} without a covariate).{' '}
        {r.data.method}
        {run.reason && <> Reason given: &ldquo;{run.reason}&rdquo;.</>}
      </p>
      <StatisticianCaution />
      <CautionsPanel cautions={r.cautions} />
      {r.model.blocked.length > 0 && (
        <p className="text-sm text-brick">
          Kept out of the model:{' '}
          {r.model.blocked
            .map((b) => `${b.label} (${b.valuesAfterRandomization} values after randomization)`)
            .join(', ')}
          .
        </p>
      )}
      <AnovaComparison result={r} />
      <Card>
        <CardHeader
          title="Adjusted means and slopes"
          description={`Arm means corrected to the covariate means, with ${Math.round(r.confidenceLevel * 100)}% confidence intervals.`}
        />
        <CardBody className="flex flex-col gap-5">
          <AdjustedMeansChart result={r} />
          <EstimatesTables result={r} />
        </CardBody>
      </Card>
      <Card>
        <CardHeader
          title="Where the variation goes"
          description={`Partial η² of the arm effect: ${num(r.groupEffect.adjusted.partialEtaSquared, 3)}.`}
        />
        <CardBody>
          <VariancePartitionBar result={r} />
        </CardBody>
      </Card>
      <ChecksPanel checks={r.checks} />
      <Card>
        <CardHeader title="Residuals" description="Normality of the ANCOVA residuals." />
        <CardBody className="grid gap-5 md:grid-cols-2">
          <QqPlot normality={r.normality} />
          <ResidualHistogram normality={r.normality} />
        </CardBody>
      </Card>
      {r.linearity && (
        <Card>
          <CardHeader
            title="Linearity and slopes by arm"
            description={`Outcome against ${r.linearity.covariate.label}.`}
          />
          <CardBody>
            <LinearityChart linearity={r.linearity} outcome={r.spec.outcome} />
            {r.slopeHomogeneity && (
              <p className="mt-3 text-sm text-ink">
                Own slope per arm:{' '}
                {r.slopeHomogeneity.groupSlopes
                  .map((g) => `${g.code} ${num(g.slope, 3)} on ${g.covariate}`)
                  .join('; ')}
                . Interaction F(
                {r.slopeHomogeneity.df1}, {r.slopeHomogeneity.df2}) = {num(r.slopeHomogeneity.f)}, p{' '}
                {pValue(r.slopeHomogeneity.p)}.
              </p>
            )}
          </CardBody>
        </Card>
      )}
      {r.changeScore && (
        <Card data-testid="change-score">
          <CardHeader
            title="Change-score analysis beside the ANCOVA"
            description="Shown for non-randomized groups (Lord's paradox)."
          />
          <CardBody className="flex flex-col gap-3">
            <Table>
              <THead>
                <TR>
                  <TH>Group</TH>
                  <TH className="text-right">n</TH>
                  <TH className="text-right">Mean change</TH>
                  <TH className="text-right">SD</TH>
                </TR>
              </THead>
              <TBody>
                {r.changeScore.groups.map((g) => (
                  <TR key={g.code}>
                    <TD className="figure">{g.code}</TD>
                    <TD className="figure text-right">{g.n}</TD>
                    <TD className="figure text-right">{num(g.meanChange, 2)}</TD>
                    <TD className="figure text-right">{num(g.sd, 2)}</TD>
                  </TR>
                ))}
              </TBody>
            </Table>
            <p className="text-sm text-ink">
              Difference in mean change {r.changeScore.difference.a} minus {r.changeScore.difference.b}:{' '}
              {num(r.changeScore.difference.estimate)} ({num(r.changeScore.difference.lower)} to{' '}
              {num(r.changeScore.difference.upper)}); ANCOVA adjusted difference{' '}
              {num(r.changeScore.ancovaDifference)}.
              {r.changeScore.baselineSmd !== null && <> Baseline SMD {num(r.changeScore.baselineSmd)}.</>}
            </p>
            <p className="text-sm text-graphite">{r.changeScore.explanation}</p>
          </CardBody>
        </Card>
      )}
      <p className="text-sm text-graphite">{r.note}</p>
    </section>
  );
}
