import type { Freshness } from '@counterpoise/contracts/balance';
import { Badge } from '../../../components/ui/badge.js';
import { Button } from '../../../components/ui/button.js';
import { errorMessage } from '../../../lib/form-errors.js';
import { useRecomputeBalance } from '../api/recompute-balance.js';
import { formatDateTime } from './format.js';

/**
 * When the figures were computed and whether a newer snapshot is on its way. The page polls
 * (faster while pending), so it updates by itself when the recompute lands.
 */
export function FreshnessBar({
  studyId,
  freshness,
  canRecompute,
}: {
  studyId: string;
  freshness: Freshness;
  canRecompute: boolean;
}) {
  const recompute = useRecomputeBalance(studyId);
  const pending = freshness.recomputePending || recompute.isPending;
  return (
    <div className="flex flex-wrap items-center gap-3" data-testid="balance-freshness">
      <p className="text-sm text-graphite" aria-live="polite">
        {freshness.computedAt ? (
          <>
            Computed at <span className="figure text-ink">{formatDateTime(freshness.computedAt)}</span>
            {freshness.enrolledCount !== null && (
              <>
                {' '}
                · <span className="figure text-ink">{freshness.enrolledCount}</span> enrolled
              </>
            )}
          </>
        ) : (
          'No snapshot has been computed yet.'
        )}
        {pending ? (
          <Badge tone="ochre" className="ml-2">
            <span aria-hidden="true" className="size-2 animate-pulse rounded-full bg-ochre" />
            recompute pending
          </Badge>
        ) : (
          freshness.computedAt && (
            <Badge tone="moss" className="ml-2">
              up to date
            </Badge>
          )
        )}
      </p>
      {canRecompute && (
        <Button
          variant="secondary"
          size="sm"
          busy={recompute.isPending}
          disabled={freshness.recomputePending}
          onClick={() => recompute.mutate()}
        >
          Recompute now
        </Button>
      )}
      {recompute.isError && (
        <p role="alert" className="text-sm font-medium text-brick">
          {errorMessage(recompute.error)}
        </p>
      )}
      {recompute.data?.alreadyPending && (
        <p className="text-sm text-graphite" role="status">
          A recompute was already queued; it will include every change so far.
        </p>
      )}
    </div>
  );
}
