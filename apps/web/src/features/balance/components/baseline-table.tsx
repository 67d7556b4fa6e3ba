import { Fragment, useId, useState } from 'react';
import { balanceCautions, type BaselineTable } from '@counterpoise/contracts/balance';
import { Callout } from '../../../components/ui/callout.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { CheckboxField } from '../../../components/ui/field.js';
import { ErrorState, LoadingState } from '../../../components/ui/states.js';
import { Table, TBody, TD, TH, THead, TR } from '../../../components/ui/table.js';
import { buttonClass } from '../../../components/ui/button.js';
import { baselineTableCsvHref, useBaselineTable } from '../api/get-baseline-table.js';
import { pValueRows } from './pvalue-rows.js';

type Row = BaselineTable['rows'][number];

const statisticLabel: Record<Row['statistic'], string> = {
  mean_sd: 'mean (SD)',
  median_iqr: 'median [IQR]',
  level: '',
  missing: 'missing',
};

function groupRows(rows: Row[]): Array<{ key: string; label: string; rows: Row[] }> {
  const groups: Array<{ key: string; label: string; rows: Row[] }> = [];
  for (const row of rows) {
    const last = groups[groups.length - 1];
    if (last && last.key === row.covariateKey) last.rows.push(row);
    else groups.push({ key: row.covariateKey, label: row.label, rows: [row] });
  }
  return groups;
}

/** The baseline table by arm and overall; p-values only on request, each time with the CONSORT caution. */
export function BaselineTableCard({ studyId, siteId = null }: { studyId: string; siteId?: string | null }) {
  const [showP, setShowP] = useState(false);
  const table = useBaselineTable(studyId, showP, siteId);
  const captionId = useId();

  return (
    <Card>
      <CardHeader
        title="Baseline characteristics"
        description="By arm and overall: mean (SD) and median [IQR] for measurements, n (%) for categories, and missing counts. Withdrawn participants stay in (intention-to-treat)."
        actions={
          <a
            className={buttonClass('secondary', 'sm')}
            href={baselineTableCsvHref(studyId, showP, siteId)}
            download
            data-testid="baseline-csv"
          >
            Download CSV
          </a>
        }
      />
      <CardBody className="flex flex-col gap-4">
        <CheckboxField
          label="Show baseline p-values, labelled"
          hint="Off by default. In a randomized trial they test a difference known to be chance."
          checked={showP}
          onChange={(event) => setShowP(event.currentTarget.checked)}
        />
        {showP && (
          <Callout tone="caution" role="note" title="Baseline p-values are chance by construction">
            <p data-testid="consort-caution">
              {table.data?.pValues?.caution ?? balanceCautions.consortPValues}
            </p>
          </Callout>
        )}
        {table.isPending ? (
          <LoadingState label="Loading the baseline table…" />
        ) : table.isError ? (
          <ErrorState error={table.error} onRetry={() => void table.refetch()} />
        ) : (
          <>
            <Table aria-labelledby={captionId} data-testid="baseline-table">
              <caption id={captionId} className="sr-only">
                Baseline characteristics by arm and overall
              </caption>
              <THead>
                <TR>
                  <TH>Characteristic</TH>
                  {table.data.columns.map((c) => (
                    <TH key={c.column} className="text-right">
                      {c.label}
                      <span className="figure block font-normal tracking-normal normal-case">n = {c.n}</span>
                    </TH>
                  ))}
                </TR>
              </THead>
              <TBody>
                {groupRows(table.data.rows).map((group) => (
                  <Fragment key={group.key}>
                    <TR className="bg-paper/50">
                      <th
                        scope="rowgroup"
                        colSpan={table.data.columns.length + 1}
                        className="px-4 pt-3 pb-1.5 text-left font-semibold text-ink"
                      >
                        {group.label}
                      </th>
                    </TR>
                    {group.rows.map((row, index) => (
                      <TR key={`${row.statistic}-${row.level ?? index}`}>
                        <th scope="row" className="py-2 pr-4 pl-8 text-left font-normal text-graphite">
                          {row.statistic === 'level' ? row.level : statisticLabel[row.statistic]}
                        </th>
                        {table.data.columns.map((c) => {
                          const cell = row.cells.find((x) => x.column === c.column);
                          return (
                            <TD key={c.column} className="figure py-2 text-right whitespace-nowrap">
                              {cell?.text ?? '—'}
                            </TD>
                          );
                        })}
                      </TR>
                    ))}
                  </Fragment>
                ))}
              </TBody>
            </Table>
            {showP && table.data.pValues && <PValueTable table={table.data} />}
          </>
        )}
      </CardBody>
    </Card>
  );
}

/** The labelled p-values, apart from the table: the test used per row, and footnotes saying why a value is missing or doubtful. */
function PValueTable({ table }: { table: BaselineTable }) {
  const { rows, notes, singleComparison } = pValueRows(table);
  const notesId = useId();
  return (
    <div className="flex flex-col gap-2">
      <h3 className="text-sm font-semibold text-ink">
        Labelled baseline p-values
        {singleComparison && (
          <span className="font-normal text-graphite" data-testid="baseline-pvalues-comparison">
            : {singleComparison}
          </span>
        )}
      </h3>
      <p className="text-sm text-graphite" data-testid="baseline-pvalues-method">
        {table.pValues?.method}
      </p>
      <Table data-testid="baseline-pvalues">
        <caption className="sr-only">
          Baseline p-values, shown on request; they are not a measure of imbalance.
        </caption>
        <THead>
          <TR>
            <TH>Characteristic</TH>
            {!singleComparison && <TH>Comparison</TH>}
            <TH>Test</TH>
            <TH className="text-right">p (chance by construction)</TH>
          </TR>
        </THead>
        <TBody>
          {rows.map((row) => (
            <TR key={row.id} data-testid="baseline-pvalue-row">
              <TD>{row.label}</TD>
              {!singleComparison && <TD className="text-graphite">{row.comparison}</TD>}
              <TD className="text-graphite whitespace-nowrap">{row.test}</TD>
              <TD
                className="figure text-right whitespace-nowrap"
                title={row.note ?? undefined}
                aria-describedby={row.marker !== null ? `${notesId}-${row.marker}` : undefined}
              >
                {row.p}
                {row.marker !== null && (
                  <sup className="ml-0.5 font-sans text-graphite" aria-hidden="true">
                    {row.marker}
                  </sup>
                )}
              </TD>
            </TR>
          ))}
        </TBody>
      </Table>
      {notes.length > 0 && (
        <ol className="flex flex-col gap-1 text-sm text-graphite" data-testid="baseline-pvalue-notes">
          {notes.map((n) => (
            <li key={n.marker} id={`${notesId}-${n.marker}`}>
              <sup className="mr-1" aria-hidden="true">
                {n.marker}
              </sup>
              {n.text}
            </li>
          ))}
        </ol>
      )}
    </div>
  );
}
