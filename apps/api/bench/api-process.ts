/**
 * The API for the benchmarks, as the start script runs it: src/server.ts in its own process with
 * the heap limit (API_HEAP_MB, default 256) and production settings. BENCH_CPU_PROF=dir writes a
 * CPU profile of it.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const here = path.dirname(fileURLToPath(import.meta.url));

export async function startApi(port: number, env: Record<string, string>): Promise<ChildProcess> {
  const prof = process.env.BENCH_CPU_PROF ? ['--cpu-prof', `--cpu-prof-dir=${process.env.BENCH_CPU_PROF}`] : [];
  const heap = `--max-old-space-size=${process.env.API_HEAP_MB ?? 256}`;
  const child = spawn(process.execPath, [...prof, heap, '--import', 'tsx', path.join(here, '../src/server.ts')], {
    env: {
      ...process.env,
      PORT: String(port),
      APP_ORIGIN: `http://127.0.0.1:${port}`,
      NODE_ENV: 'production',
      LOG_LEVEL: 'warn',
      JWT_SECRET: 'bench-secret-bench-secret-bench-secret-0123',
      ...env,
    },
    stdio: ['ignore', 'ignore', 'inherit'],
  });
  for (let i = 0; i < 150; i++) {
    await new Promise((r) => setTimeout(r, 200));
    const ok = await fetch(`http://127.0.0.1:${port}/api/health`).then((r) => r.ok, () => false);
    if (ok) {
      // With several API processes the first answer comes from one; give the others time to listen.
      if (Number(env.API_PROCESSES ?? 1) > 1) await new Promise((r) => setTimeout(r, 1500));
      return child;
    }
  }
  throw new Error('API did not start');
}

export async function stopApi(child: ChildProcess): Promise<void> {
  child.kill('SIGTERM');
  await new Promise((r) => child.once('exit', r));
}
