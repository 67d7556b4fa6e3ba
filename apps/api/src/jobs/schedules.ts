import type PgBoss from 'pg-boss';
import { DIGEST_CRON } from '../modules/digest/digest.job.js';

/** Recurring jobs (cron, UTC). The weekly sponsor digest is added by its module. */
export const schedules: { queue: string; cron: string; data?: object }[] = [{ queue: 'digest.weekly', cron: DIGEST_CRON }];

export async function scheduleJobs(boss: PgBoss): Promise<void> {
  for (const s of schedules) await boss.schedule(s.queue, s.cron, s.data ?? {}, { tz: 'UTC' });
}
