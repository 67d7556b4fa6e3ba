import type PgBoss from 'pg-boss';

/**
 * Every queue, with its policy. 'stately' keeps at most one queued and one running job per
 * singleton key, so a burst of changes to one study collapses into a handful of recomputes.
 */
export const queueDefinitions = [
  {
    name: 'balance.recompute',
    deadLetter: 'balance.recompute.dead',
    options: { policy: 'stately', retryLimit: 5, retryDelay: 2, retryBackoff: true, expireInMinutes: 10 },
  },
  {
    name: 'mail.send',
    deadLetter: 'mail.send.dead',
    options: { policy: 'standard', retryLimit: 8, retryDelay: 5, retryBackoff: true, expireInMinutes: 5 },
  },
  {
    name: 'digest.weekly',
    deadLetter: 'digest.weekly.dead',
    options: { policy: 'standard', retryLimit: 3, retryDelay: 60, retryBackoff: true, expireInMinutes: 30 },
  },
] as const satisfies readonly { name: string; deadLetter?: string; options: Omit<PgBoss.Queue, 'name'> }[];

export type QueueName = (typeof queueDefinitions)[number]['name'];
