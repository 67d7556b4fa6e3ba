import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { startFakeSmtp } from './fake-smtp.js';

/**
 * Process entry of the local fake SMTP server (started by scripts/start.sh and scripts/test.sh).
 * Env: SMTP_PORT (default 2525), OUTBOX_DIR (default .data/outbox, relative to the repository).
 */

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../../..');

function log(message: string): void {
  process.stdout.write(`${new Date().toISOString()} fake-smtp ${message}\n`);
}

const rawPort = process.env.SMTP_PORT || '2525';
const port = Number(rawPort);
if (!Number.isInteger(port) || port < 0 || port > 65535) {
  process.stderr.write(`fake-smtp: SMTP_PORT must be a port number, got "${rawPort}"\n`);
  process.exit(1);
}
const outboxSetting = process.env.OUTBOX_DIR || '.data/outbox';
const outboxDir = path.isAbsolute(outboxSetting) ? outboxSetting : path.join(repoRoot, outboxSetting);

const smtp = await startFakeSmtp({
  port,
  outboxDir,
  onMessage: (m) =>
    log(`kept ${m.id} from=${m.from} to=${m.to.join(',')} subject=${JSON.stringify(m.subject)}`),
  onError: (error) => log(`error: ${error.message}`),
});
log(`listening on 127.0.0.1:${smtp.port}, keeping messages in ${outboxDir}`);

let stopping = false;
async function stop(signal: string): Promise<void> {
  if (stopping) return;
  stopping = true;
  log(`${signal}: stopping`);
  // Open connections would otherwise hold close() for smtp-server's 30 s grace period.
  const force = setTimeout(() => process.exit(0), 3000);
  force.unref();
  await smtp.close();
  process.exit(0);
}
process.on('SIGTERM', () => void stop('SIGTERM'));
process.on('SIGINT', () => void stop('SIGINT'));
