import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

/**
 * `npm run bench -w @counterpoise/api`: the enrollment/import and balance benchmarks, one after
 * the other, each in its own process (they start their own API servers and databases).
 * Figures only; nothing here asserts on time.
 */
const here = path.dirname(fileURLToPath(import.meta.url));
let failed = 0;
for (const file of ['enrollment.bench.ts', 'balance.bench.ts']) {
  console.log(`\n== ${file}`);
  const r = spawnSync(process.execPath, ['--import', 'tsx', path.join(here, file), ...process.argv.slice(2)], { stdio: 'inherit' });
  if (r.status !== 0) failed += 1;
}
process.exitCode = failed ? 1 : 0;
