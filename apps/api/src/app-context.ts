import type { DataSource } from 'typeorm';
import type { Env } from './config/env.js';
import type { Mailer } from './modules/mail/mailer.js';
import type { JobQueue } from './jobs/queue.js';

/** What route modules need, passed in explicitly so tests can build the app against any database. */
export type AppContext = {
  env: Env;
  ds: DataSource;
  mailer: Mailer;
  jobs: JobQueue;
};
