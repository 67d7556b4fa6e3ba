import { randomBytes } from 'node:crypto';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { z } from 'zod';

/** Repository root, so relative folders in the environment mean the same from every process. */
export const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../../..');

const port = z.coerce.number().int().min(0).max(65535);

const envSchema = z
  .object({
    NODE_ENV: z.enum(['development', 'test', 'production']).default('development'),
    PORT: port.default(5480),
    APP_ORIGIN: z.url().default('http://127.0.0.1:5480'),
    LOG_LEVEL: z.enum(['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent']).default('info'),
    DB_HOST: z.string().min(1).default('127.0.0.1'),
    DB_PORT: port.default(54329),
    DB_NAME: z.string().min(1).default('counterpoise'),
    DB_OWNER_USER: z.string().min(1).default('counterpoise_owner'),
    DB_OWNER_PASSWORD: z.string().min(1).default('owner-local-only'),
    DB_APP_USER: z.string().min(1).default('counterpoise_app'),
    DB_APP_PASSWORD: z.string().min(1).default('app-local-only'),
    DB_POOL_SIZE: z.coerce.number().int().min(1).max(200).default(20),
    /** API processes sharing PORT (node:cluster); each has its own pool of DB_POOL_SIZE. */
    API_PROCESSES: z.coerce.number().int().min(1).max(64).default(1),
    JWT_SECRET: z.string().optional(),
    SESSION_TTL_MINUTES: z.coerce.number().int().min(5).max(7 * 24 * 60).default(480),
    SIGN_IN_MAX_FAILURES: z.coerce.number().int().min(1).max(1000).default(5),
    SIGN_IN_WINDOW_MINUTES: z.coerce.number().int().min(1).max(1440).default(15),
    SMTP_HOST: z.string().min(1).default('127.0.0.1'),
    SMTP_PORT: port.default(2525),
    MAIL_FROM: z.string().min(3).default('Counterpoise <no-reply@counterpoise.example>'),
    OUTBOX_DIR: z.string().min(1).default('.data/outbox'),
    UPLOAD_DIR: z.string().min(1).default('.data/uploads'),
    WEB_DIST_DIR: z.string().min(1).default('apps/web/dist'),
    DEMO_PASSWORD: z.string().min(8).default('balance-demo-2026'),
  })
  .superRefine((env, ctx) => {
    if (env.NODE_ENV === 'production' && (!env.JWT_SECRET || env.JWT_SECRET.length < 32)) {
      ctx.addIssue({ code: 'custom', path: ['JWT_SECRET'], message: 'required in production, 32+ characters' });
    }
  });

export type Env = Omit<z.infer<typeof envSchema>, 'JWT_SECRET'> & {
  JWT_SECRET: string;
  outboxDir: string;
  uploadDir: string;
  webDistDir: string;
};

/** Reads and validates the environment; prints every problem at once and exits on failure. */
export function loadEnv(source: NodeJS.ProcessEnv = process.env): Env {
  const cleaned = Object.fromEntries(Object.entries(source).filter(([, v]) => v !== ''));
  const parsed = envSchema.safeParse(cleaned);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  - ${i.path.join('.')}: ${i.message}`);
    throw new Error(`Invalid configuration:\n${lines.join('\n')}`);
  }
  const env = parsed.data;
  const abs = (p: string) => (path.isAbsolute(p) ? p : path.join(repoRoot, p));
  return {
    ...env,
    // A generated secret is fine locally: sessions simply end when the process restarts.
    JWT_SECRET: env.JWT_SECRET ?? randomBytes(32).toString('hex'),
    outboxDir: abs(env.OUTBOX_DIR),
    uploadDir: abs(env.UPLOAD_DIR),
    webDistDir: abs(env.WEB_DIST_DIR),
  };
}

let cached: Env | undefined;
export function env(): Env {
  cached ??= loadEnv();
  return cached;
}
