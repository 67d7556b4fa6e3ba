import 'reflect-metadata';
import bcrypt from 'bcryptjs';
import { loadEnv } from '../config/env.js';
import { createDataSource } from '../db/data-source.js';
import { createJobQueue } from '../jobs/queue.js';
import { seedAnalysis } from './seed-analysis.js';
import { seedDemo } from './seed-demo.js';

const env = loadEnv();
const ds = createDataSource(env);
await ds.initialize();
try {
  const hash = await bcrypt.hash(env.DEMO_PASSWORD, 10);
  const jobs = await createJobQueue(env);
  const summary = await seedDemo(ds, hash, jobs).finally(() => jobs.stop());
  console.log(summary.created ? `Demo data created: ${summary.detail}` : 'Demo data already present; nothing added.');
  console.log((await seedAnalysis(ds)).detail);
} finally {
  await ds.destroy();
}
