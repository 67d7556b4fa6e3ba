import type { OutcomesOverview } from '@counterpoise/contracts/analysis';
import { Callout } from '../../../components/ui/callout.js';
import { TextLink } from '../../../components/ui/text-link.js';
import { Fact } from '../../../components/ui/fact.js';


/** What is being recorded, from the analysis specification, and the promise that no arm is shown. */
export function OutcomesIntro({
  outcome,
  specVersion,
  specStatus,
  siteCodes,
  participantsHref,
}: {
  outcome: NonNullable<OutcomesOverview['outcome']>;
  specVersion: number | null;
  specStatus: OutcomesOverview['specStatus'];
  /** Set for site staff: the sites they may record for. */
  siteCodes: string[] | null;
  participantsHref: string | null;
}) {
  return (
    <div className="flex flex-col gap-4" data-testid="outcomes-intro">
      <dl className="grid gap-4 rounded-card border border-rule bg-vellum px-5 py-4 shadow-card sm:grid-cols-2 lg:grid-cols-4">
        <Fact label="Outcome">
          <span className="font-semibold">{outcome.label}</span>
        </Fact>
        <Fact label="Unit">{outcome.unit ?? 'none given in the specification'}</Fact>
        <Fact label="Named by">
          Analysis specification, version {specVersion} ({specStatus === 'locked' ? 'locked' : 'draft'})
        </Fact>
        {siteCodes && <Fact label="Your sites">{siteCodes.join(', ')}</Fact>}
      </dl>
      <p className="max-w-prose text-ink">
        Record each participant’s value with the date it was measured, one at a time or from a CSV file.
        Participants are found by their code
        {participantsHref ? (
          <>
            , as shown on the <TextLink to={participantsHref}>Participants</TextLink> tab
          </>
        ) : null}
        {siteCodes ? '; you can record outcomes for participants of your own sites only.' : '.'}
      </p>
      <Callout tone="info" role="note" title="Entered without arms">
        This page never shows which arm a participant is in, and nothing entered here reveals one: values are
        matched by participant code only. Entering a value again for the same participant corrects it; a
        correction needs a reason and is kept in the audit trail with the old and the new value.
      </Callout>
    </div>
  );
}
