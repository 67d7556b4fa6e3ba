import 'reflect-metadata';
import bcrypt from 'bcryptjs';
import { loadEnv } from '../config/env.js';
import { createDataSource } from '../db/data-source.js';
import { createJobQueue } from '../jobs/queue.js';
import { recomputeBalance } from '../modules/balance/balance-recompute.job.js';
import { seedAnalysis } from './seed-analysis.js';
import { seedDemo } from './seed-demo.js';

const env = loadEnv();
const ds = createDataSource(env);
await ds.initialize();
try {
  const hash = await bcrypt.hash(env.DEMO_PASSWORD, 10);
  const jobs = await createJobQueue(env);
  // A balance snapshot after each step of the demo's enrollment gives it a history. The seed
  // sends no mail: alert e-mails stay pending and the worker sends them once it runs.
  const ctx = { env, ds, jobs, mailer: { send: async () => false } };
  const afterStep = async (studyId: string) => {
    await recomputeBalance(ctx, { studyId, reason: 'demo enrollment', full: true }).catch((err: Error) => {
      if (!/could not be sent/.test(err.message)) throw err;
    });
  };
  const summary = await seedDemo(ds, hash, jobs, afterStep).finally(() => jobs.stop());
  console.log(summary.created ? `Demo data created: ${summary.detail}` : 'Demo data already present; nothing added.');
  console.log((await seedAnalysis(ds)).detail);
} finally {
  await ds.destroy();
}
