import type { Caution } from '@counterpoise/contracts/analysis';
import { Callout } from '../../../components/ui/callout.js';

const order = { blocked: 0, warning: 1, info: 2 } as const;

/** DOMAIN cautions 3-10 as computed by the server, most serious first, each with its source. */
export function CautionsPanel({ cautions, title = 'Cautions' }: { cautions: Caution[]; title?: string }) {
  if (cautions.length === 0) return null;
  const sorted = [...cautions].sort((a, b) => order[a.severity] - order[b.severity] || a.number - b.number);
  return (
    <section
      aria-labelledby="analysis-cautions"
      className="flex flex-col gap-2"
      data-testid="analysis-cautions"
    >
      <h3 id="analysis-cautions" className="text-base font-semibold text-ink">
        {title}
      </h3>
      {sorted.map((c) => (
        <Callout
          key={c.code}
          tone={c.severity === 'blocked' ? 'danger' : c.severity === 'warning' ? 'caution' : 'info'}
          title={
            <>
              {c.severity === 'blocked' ? 'Blocked: ' : ''}
              {c.title}
            </>
          }
        >
          <p data-caution={c.code}>{c.message}</p>
          <p className="mt-1 text-xs opacity-90">Source: {c.source}</p>
        </Callout>
      ))}
    </section>
  );
}
