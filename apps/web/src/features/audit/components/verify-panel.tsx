import { Button } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { useVerifyAudit } from '../api/verify-audit.js';

const problemText = {
  hash_mismatch: 'its stored hash does not match its content (the row was altered)',
  chain_broken: 'it does not point at the previous event’s hash (an event was removed or reordered)',
} as const;

/** Re-computes the hash chain on the server and reports the first broken link, if any. */
export function VerifyPanel() {
  const verify = useVerifyAudit();
  const result = verify.data;

  return (
    <div className="flex flex-col gap-3">
      <div className="flex flex-wrap items-center gap-3">
        <Button variant="secondary" busy={verify.isFetching} onClick={() => void verify.refetch()}>
          Verify the chain
        </Button>
        <p className="text-sm text-graphite">
          Checks every event’s SHA-256 hash and its link to the one before.
        </p>
      </div>
      <div aria-live="polite" aria-atomic="true">
        {verify.isError && !verify.isFetching && (
          <Callout tone="danger" title="Verification could not run">
            {verify.error.message}
          </Callout>
        )}
        {result && !verify.isFetching && result.ok && (
          <Callout tone="success" title="Audit trail intact">
            <p>
              <span className="figure">{result.checked.toLocaleString('en')}</span> events checked; every hash
              matches and every link holds.
            </p>
            {result.lastHash && (
              <p className="mt-1 text-xs">
                Latest hash <span className="figure break-all">{result.lastHash}</span>
              </p>
            )}
          </Callout>
        )}
        {result && !verify.isFetching && !result.ok && (
          <Callout tone="danger" title="Audit trail broken">
            <p>
              {result.firstBroken ? (
                <>
                  The first broken link is event{' '}
                  <span className="figure font-semibold">#{result.firstBroken.seq}</span>:{' '}
                  {problemText[result.firstBroken.problem]}.
                </>
              ) : (
                'The chain did not verify.'
              )}{' '}
              <span className="figure">{result.checked.toLocaleString('en')}</span> events were checked.
            </p>
            <p className="mt-1">Preserve the database as it is and tell the study’s quality lead.</p>
          </Callout>
        )}
      </div>
    </div>
  );
}
