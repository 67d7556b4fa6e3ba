import type PgBoss from 'pg-boss';

/** Recurring jobs (cron, UTC). The weekly sponsor digest is added by its module. */
export const schedules: { queue: string; cron: string; data?: object }[] = [];

export async function scheduleJobs(boss: PgBoss): Promise<void> {
  for (const s of schedules) await boss.schedule(s.queue, s.cron, s.data ?? {}, { tz: 'UTC' });
}
