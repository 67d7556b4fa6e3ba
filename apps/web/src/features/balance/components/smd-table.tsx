import { Badge } from '../../../components/ui/badge.js';
import { Table, TBody, TD, TH, THead, TR } from '../../../components/ui/table.js';
import { formatBand, formatNumber, formatSmd } from './format.js';
import type { SmdRow } from './smd-rows.js';

/** Every figure of the dot chart as a table: its text alternative and the place to read exact values. */
export function SmdTable({
  rows,
  threshold,
  weighted,
}: {
  rows: SmdRow[];
  threshold: number;
  weighted: boolean;
}) {
  return (
    <Table data-testid="smd-table">
      <caption className="sr-only">Standardized mean differences by covariate</caption>
      <THead>
        <TR>
          <TH>Covariate</TH>
          <TH>Comparison</TH>
          <TH className="text-right">n</TH>
          <TH className="text-right">SMD</TH>
          {weighted && <TH className="text-right">After weighting</TH>}
          <TH className="text-right">95% chance band</TH>
          <TH className="text-right">Variance ratio</TH>
          <TH>Reading</TH>
        </TR>
      </THead>
      <TBody>
        {rows.map((row) => (
          <TR key={row.id}>
            <TD>
              {row.label}
              {row.isStratification && <span className="ml-1.5 text-xs text-graphite">(stratification)</span>}
              {row.isAdjustment && (
                <span className="ml-1.5 text-xs text-graphite">(pre-specified adjustment)</span>
              )}
            </TD>
            <TD className="text-graphite">{row.comparison}</TD>
            <TD className="figure text-right whitespace-nowrap">
              {row.nArm} / {row.nReference}
            </TD>
            <TD className="figure text-right">{formatSmd(row.smd)}</TD>
            {weighted && <TD className="figure text-right">{formatSmd(row.after)}</TD>}
            <TD className="figure text-right">{formatBand(row.halfWidth)}</TD>
            <TD className="figure text-right">{formatNumber(row.varianceRatio)}</TD>
            <TD>
              <div className="flex flex-wrap gap-1">
                {row.flags.beyondChance && <Badge tone="brick">beyond chance band</Badge>}
                {!row.flags.beyondChance && row.flags.smdOverThreshold && (
                  <Badge tone="ochre">over {threshold}, within chance</Badge>
                )}
                {row.flags.varianceRatioOutside && <Badge tone="ochre">variance ratio outside range</Badge>}
                {!row.flags.beyondChance &&
                  !row.flags.smdOverThreshold &&
                  !row.flags.varianceRatioOutside && <span className="text-graphite">within chance</span>}
                {row.note && <span className="text-graphite">{row.note}</span>}
              </div>
            </TD>
          </TR>
        ))}
      </TBody>
    </Table>
  );
}
