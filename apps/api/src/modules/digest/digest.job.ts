import type { JobHandler } from '../../jobs/handlers.js';
import { sendWeeklyDigests } from './digest.service.js';

/** Mondays 07:00 UTC: the blinded weekly digest for sponsors (see schedules.ts). */
export const DIGEST_CRON = '0 7 * * 1';

export const digestWeeklyHandler: JobHandler = {
  queue: 'digest.weekly',
  // Each run covers the week before the current Monday; a repeated or retried run skips
  // every digest already delivered for that week.
  async handle(ctx, jobs, log) {
    if (jobs.length === 0) return;
    const result = await sendWeeklyDigests(ctx, new Date());
    log.info(result, 'weekly digests');
  },
};
