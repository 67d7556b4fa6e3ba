import type { AssumptionCheck } from '@counterpoise/contracts/analysis';
import { Badge, type BadgeTone } from '../../../components/ui/badge.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';

const status: Record<AssumptionCheck['status'], { tone: BadgeTone; text: string }> = {
  pass: { tone: 'moss', text: 'Pass' },
  attention: { tone: 'ochre', text: 'Attention' },
  recorded: { tone: 'harbor', text: 'Recorded by design' },
  review: { tone: 'harbor', text: 'Look at the chart' },
  not_computed: { tone: 'neutral', text: 'Not computed' },
};

/** The ANCOVA's assumptions, each with its status in words (not colour alone) and the rule's source. */
export function ChecksPanel({ checks }: { checks: AssumptionCheck[] }) {
  return (
    <Card data-testid="assumption-checks">
      <CardHeader
        title="Assumption checks"
        description="A pass is not proof; attention is not a verdict. The statistician judges both."
      />
      <CardBody>
        <ul className="divide-y divide-rule">
          {checks.map((c) => (
            <li
              key={c.id}
              className="flex flex-col gap-1 py-3 first:pt-0 last:pb-0 sm:flex-row sm:gap-4"
              data-check={c.id}
            >
              <div className="sm:w-40 sm:shrink-0">
                <Badge tone={status[c.status].tone}>{status[c.status].text}</Badge>
              </div>
              <div className="min-w-0 text-sm">
                <p className="font-semibold text-ink">{c.title}</p>
                <p className="text-ink">{c.summary}</p>
                <p className="mt-0.5 text-xs text-graphite">Rule: {c.source}</p>
              </div>
            </li>
          ))}
        </ul>
      </CardBody>
    </Card>
  );
}
