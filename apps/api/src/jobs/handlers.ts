import type PgBoss from 'pg-boss';
import type { Logger } from 'pino';
import type { AppContext } from '../app-context.js';
import type { QueueName } from './queues.js';
import { balanceRecomputeHandler } from '../modules/balance/balance-recompute.job.js';
import { digestWeeklyHandler } from '../modules/digest/digest.job.js';

export type JobHandler = {
  queue: QueueName;
  /** Handles one batch of jobs; throwing fails them, and pg-boss retries with backoff. */
  handle(ctx: AppContext, jobs: PgBoss.Job<object>[], log: Logger): Promise<void>;
  batchSize?: number;
};

/** Every job handler the worker runs, one line per queue, added by the module that owns it. */
export const jobHandlers: JobHandler[] = [
  balanceRecomputeHandler,
  digestWeeklyHandler,
  {
    queue: 'mail.send',
    async handle(ctx, jobs) {
      for (const job of jobs) {
        const data = job.data as { to: string | string[]; subject: string; text: string };
        const sent = await ctx.mailer.send(data);
        if (!sent) throw new Error('SMTP server did not accept the message');
      }
    },
  },
];
