import type { AnovaRow, RunResult } from '@counterpoise/contracts/analysis';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { Table, TBody, TD, TH, THead, TR } from '../../../components/ui/table.js';
import { num, pValue } from './format.js';

/** Large sums of squares without decimals, so both tables fit side by side. */
const sumOfSquares = (x: number | null) => num(x, x !== null && Math.abs(x) >= 1000 ? 0 : 1);

function AnovaTable({ caption, rows, testId }: { caption: string; rows: AnovaRow[]; testId: string }) {
  return (
    <div className="min-w-0">
      <h3 className="mb-2 text-sm font-semibold text-ink">{caption}</h3>
      <Table data-testid={testId}>
        <caption className="sr-only">{caption}</caption>
        <THead>
          <TR>
            <TH className="px-2">Source</TH>
            <TH className="px-2 text-right">df</TH>
            <TH className="px-2 text-right">SS</TH>
            <TH className="px-2 text-right">MS</TH>
            <TH className="px-2 text-right">F</TH>
            <TH className="px-2 text-right">p</TH>
            <TH className="px-2 text-right" style={{ textTransform: 'none' }}>
              <abbr title="partial eta squared = SS effect / (SS effect + SS error)">η²p</abbr>
            </TH>
          </TR>
        </THead>
        <TBody>
          {rows.map((r) => (
            <TR
              key={r.source}
              className={r.source === 'group' ? 'bg-spruce-wash/50 font-semibold' : undefined}
            >
              <th scope="row" className="px-2 py-2 text-left text-sm font-medium text-ink">
                {r.label}
              </th>
              <TD className="figure px-2 py-2 text-right whitespace-nowrap">{r.df}</TD>
              <TD className="figure px-2 py-2 text-right whitespace-nowrap">{sumOfSquares(r.ss)}</TD>
              <TD className="figure px-2 py-2 text-right whitespace-nowrap">{sumOfSquares(r.ms)}</TD>
              <TD className="figure px-2 py-2 text-right whitespace-nowrap">{num(r.f, 2)}</TD>
              <TD className="figure px-2 py-2 text-right whitespace-nowrap">{pValue(r.p)}</TD>
              <TD className="figure px-2 py-2 text-right whitespace-nowrap">
                {num(r.partialEtaSquared, 3)}
              </TD>
            </TR>
          ))}
        </TBody>
      </Table>
    </div>
  );
}

/** One-way ANOVA and ANCOVA side by side: what partialling out the covariates does to the error mean square. */
export function AnovaComparison({ result }: { result: RunResult }) {
  const shrink = 1 - result.errorMeanSquareRatio;
  return (
    <Card>
      <CardHeader
        title="Without and with the covariates"
        description={`Error mean square ${num(result.unadjusted.errorMeanSquare, 1)} without covariates, ${num(result.adjusted.errorMeanSquare, 1)} with them: ${shrink >= 0 ? `${(shrink * 100).toFixed(0)}% smaller` : `${(-shrink * 100).toFixed(0)}% larger`}. Arm effect F ${num(result.groupEffect.unadjusted.f)} (p ${pValue(result.groupEffect.unadjusted.p)}) becomes F ${num(result.groupEffect.adjusted.f)} (p ${pValue(result.groupEffect.adjusted.p)}).`}
      />
      <CardBody className="grid gap-5 xl:grid-cols-[minmax(0,1fr)_minmax(0,1.12fr)]">
        <AnovaTable caption="One-way ANOVA (arm only)" rows={result.unadjusted.rows} testId="anova-table" />
        <AnovaTable
          caption="ANCOVA (Type III sums of squares)"
          rows={result.adjusted.rows}
          testId="ancova-table"
        />
      </CardBody>
      <CardBody className="border-t border-rule text-sm text-graphite">
        Model: {result.model.description} R² = {num(result.adjusted.rSquared, 3)}; {result.model.parameters}{' '}
        parameters for {result.data.analysed} participants.
        {result.robust && (
          <>
            {' '}
            Heteroscedasticity-robust ({result.robust.method}) F for the arm effect: {num(result.robust.f)}, p{' '}
            {pValue(result.robust.p)}.
          </>
        )}
      </CardBody>
    </Card>
  );
}

export function EstimatesTables({ result }: { result: RunResult }) {
  const level = `${Math.round(result.confidenceLevel * 100)}%`;
  return (
    <div className="grid gap-5 lg:grid-cols-2">
      <div>
        <h3 className="mb-2 text-sm font-semibold text-ink">Adjusted means (at the covariate means)</h3>
        <Table data-testid="adjusted-means-table">
          <THead>
            <TR>
              <TH>Arm</TH>
              <TH className="px-2.5 text-right">n</TH>
              <TH className="px-2.5 text-right">Raw mean</TH>
              <TH className="px-2.5 text-right">Adjusted</TH>
              <TH className="px-2.5 text-right">SE</TH>
              <TH className="px-2.5 text-right">{level} CI</TH>
            </TR>
          </THead>
          <TBody>
            {result.adjustedMeans.map((m) => (
              <TR key={m.code}>
                <TD>
                  <span className="figure font-semibold">{m.code}</span>{' '}
                  <span className="text-graphite">{m.name}</span>
                </TD>
                <TD className="figure px-2.5 text-right whitespace-nowrap">{m.n}</TD>
                <TD className="figure px-2.5 text-right whitespace-nowrap">{num(m.rawMean, 1)}</TD>
                <TD className="figure px-2.5 text-right font-semibold whitespace-nowrap">{num(m.mean, 1)}</TD>
                <TD className="figure px-2.5 text-right whitespace-nowrap">{num(m.se, 2)}</TD>
                <TD className="figure px-2.5 text-right whitespace-nowrap">
                  {num(m.lower, 1)} to {num(m.upper, 1)}
                </TD>
              </TR>
            ))}
          </TBody>
        </Table>
        {result.differences.map((d) => (
          <p key={d.label} className="mt-3 text-sm text-ink" data-testid="adjusted-difference">
            Adjusted difference, <span className="figure">{d.label}</span>:{' '}
            <span className="figure font-semibold">{num(d.difference, 1)}</span>{' '}
            {result.spec.outcome.unit ?? ''} ({level} CI{' '}
            <span className="figure">
              {num(d.lower, 1)} to {num(d.upper, 1)}
            </span>
            , p <span className="figure">{pValue(d.p)}</span>; not adjusted for multiplicity).
          </p>
        ))}
      </div>
      <div>
        <h3 className="mb-2 text-sm font-semibold text-ink">
          Pooled within-arm slopes (and factor coefficients)
        </h3>
        <Table data-testid="slopes-table">
          <THead>
            <TR>
              <TH>Covariate column</TH>
              <TH className="px-2.5 text-right">Slope</TH>
              <TH className="px-2.5 text-right">SE</TH>
              <TH className="px-2.5 text-right">{level} CI</TH>
              <TH className="px-2.5 text-right">p</TH>
            </TR>
          </THead>
          <TBody>
            {result.slopes.map((s) => (
              <TR key={s.column}>
                <TD>{s.label}</TD>
                <TD className="figure px-2.5 text-right whitespace-nowrap">{num(s.estimate, 3)}</TD>
                <TD className="figure px-2.5 text-right whitespace-nowrap">{num(s.se, 3)}</TD>
                <TD className="figure px-2.5 text-right whitespace-nowrap">
                  {num(s.lower, 3)} to {num(s.upper, 3)}
                </TD>
                <TD className="figure px-2.5 text-right whitespace-nowrap">{pValue(s.p)}</TD>
              </TR>
            ))}
          </TBody>
        </Table>
      </div>
    </div>
  );
}
