import 'reflect-metadata';
import { loadEnv } from '../../config/env.js';
import { createDataSource } from '../../db/data-source.js';
import { verifyAuditChain } from './audit-verify.js';

/**
 * Command-line check of the audit trail's hash chain: `npm run audit:verify -w @counterpoise/api`.
 * Exits 0 when intact, 1 with the first broken link otherwise.
 */
const env = loadEnv();
const ds = createDataSource(env);
await ds.initialize();
try {
  const result = await verifyAuditChain(ds);
  if (result.ok) {
    console.log(`Audit trail intact: ${result.checked} events checked; last hash ${result.lastHash ?? '(none)'}.`);
  } else {
    const b = result.firstBroken!;
    console.error(
      `Audit trail BROKEN at event seq ${b.seq} (id ${b.id}): ${b.problem === 'hash_mismatch' ? 'its content does not match its hash (altered)' : 'it does not link to the previous event (removed, inserted or reordered)'}. ${result.checked} events before it are intact.`,
    );
    process.exitCode = 1;
  }
} finally {
  await ds.destroy();
}
