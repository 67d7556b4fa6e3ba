import type { Completeness } from '@counterpoise/contracts/analysis';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { ProgressMeter } from '../../../components/ui/progress-meter.js';
import { Table, TBody, TD, TH, THead, TR } from '../../../components/ui/table.js';

/** How many of the analysis population have the outcome recorded, overall and by site (no arms). */
export function CompletenessCard({ completeness, label }: { completeness: Completeness; label: string }) {
  return (
    <Card data-testid="outcome-completeness">
      <CardHeader
        title="Outcome completeness"
        description={`${label}: recorded for ${completeness.recorded} of ${completeness.eligible} participants (enrolled and withdrawn).`}
      />
      <CardBody className="flex flex-col gap-4">
        <ProgressMeter
          value={completeness.recorded}
          max={Math.max(completeness.eligible, 1)}
          label="Outcomes recorded"
        />
        <Table>
          <THead>
            <TR>
              <TH>Site</TH>
              <TH className="text-right">Participants</TH>
              <TH className="text-right">Recorded</TH>
              <TH className="text-right">Missing</TH>
            </TR>
          </THead>
          <TBody>
            {completeness.bySite.map((s) => (
              <TR key={s.siteCode}>
                <TD>
                  <span className="figure font-semibold">{s.siteCode}</span> {s.siteName}
                </TD>
                <TD className="figure text-right">{s.eligible}</TD>
                <TD className="figure text-right">{s.recorded}</TD>
                <TD className="figure text-right">{s.eligible - s.recorded}</TD>
              </TR>
            ))}
          </TBody>
        </Table>
      </CardBody>
    </Card>
  );
}
