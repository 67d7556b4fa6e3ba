import 'reflect-metadata';
import { loadEnv } from '../../../config/env.js';
import { createDataSource } from '../../../db/data-source.js';
import { createJobQueue } from '../../../jobs/queue.js';
import { createMailer } from '../../mail/mailer.js';
import { recomputeBalance, type RecomputeHooks } from '../balance-recompute.job.js';

/**
 * A worker process for the crash test: runs one recompute and, at the point named by
 * BALANCE_PAUSE_AT, prints PAUSED and waits to be killed.
 */
const env = loadEnv();
const ds = createDataSource(env);
await ds.initialize();
const jobs = await createJobQueue(env);
const ctx = { env, ds, mailer: createMailer(env), jobs };
const pause = () =>
  new Promise<void>(() => {
    process.stdout.write('PAUSED\n');
  });
const at = process.env.BALANCE_PAUSE_AT;
const hooks: RecomputeHooks = at === 'afterSnapshotWrite' ? { afterSnapshotWrite: pause } : at === 'beforeMail' ? { beforeMail: pause } : {};
await recomputeBalance(ctx, { studyId: process.env.BALANCE_STUDY_ID!, reason: 'enrollment' }, { jobId: 'child', hooks });
process.stdout.write('DONE\n');
process.exit(0);
