import { randomBytes } from 'node:crypto';
import { mkdir, readdir, readFile, rename, writeFile } from 'node:fs/promises';
import type { AddressInfo } from 'node:net';
import path from 'node:path';
import { simpleParser, type AddressObject } from 'mailparser';
import { SMTPServer, type SMTPServerAddress } from 'smtp-server';

/**
 * A local stand-in for a mail server: it accepts every message on loopback and keeps it as a
 * JSON file, so invite, reset and alert e-mails can be read on the admin Outbox page without a
 * mail account. Development and tests only.
 */

export type OutboxMessage = {
  id: string;
  receivedAt: string;
  from: string;
  to: string[];
  subject: string;
  text: string;
  html: string | null;
};

export type FakeSmtpOptions = {
  host?: string;
  /** 0 picks a free port. */
  port: number;
  outboxDir: string;
  /** Called after each message is safely on disk. */
  onMessage?: (message: OutboxMessage) => void;
  /** Called when a message could not be parsed or stored (the client gets a 451). */
  onError?: (error: Error) => void;
};

export type FakeSmtp = {
  port: number;
  close(): Promise<void>;
  list(): Promise<OutboxMessage[]>;
};

const MAX_MESSAGE_BYTES = 10 * 1024 * 1024;

/** File-name-safe ISO 8601 timestamp: 2026-01-31T09-15-02-123Z (colons and the dot become dashes). */
function fileStamp(date: Date): string {
  return date.toISOString().replace(/[:.]/g, '-');
}

function addressText(value: AddressObject | AddressObject[] | undefined): string {
  if (!value) return '';
  // "Name <address>" without the quotes mailparser's .text adds around names.
  return (Array.isArray(value) ? value : [value])
    .flatMap((a) => a.value)
    .map((v) => (v.name ? `${v.name} <${v.address ?? ''}>` : (v.address ?? '')))
    .join(', ');
}

function envelopeAddress(value: SMTPServerAddress | false): string {
  return value ? value.address : '';
}

async function store(outboxDir: string, message: OutboxMessage): Promise<void> {
  const finalPath = path.join(outboxDir, `${message.id}.json`);
  // Written beside the final name, then renamed: a reader never sees a half-written file.
  const tmpPath = path.join(outboxDir, `.${message.id}.json.tmp`);
  await writeFile(tmpPath, `${JSON.stringify(message, null, 2)}\n`, { encoding: 'utf8', mode: 0o600 });
  await rename(tmpPath, finalPath);
}

function isOutboxMessage(value: unknown): value is OutboxMessage {
  if (typeof value !== 'object' || value === null) return false;
  const m = value as Record<string, unknown>;
  return (
    typeof m.id === 'string' &&
    typeof m.receivedAt === 'string' &&
    typeof m.from === 'string' &&
    Array.isArray(m.to) &&
    m.to.every((t) => typeof t === 'string') &&
    typeof m.subject === 'string' &&
    typeof m.text === 'string' &&
    (m.html === null || typeof m.html === 'string')
  );
}

/** Every stored message of outboxDir, newest first. A missing folder is an empty outbox. */
export async function readOutbox(outboxDir: string): Promise<OutboxMessage[]> {
  let names: string[];
  try {
    names = await readdir(outboxDir);
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code === 'ENOENT') return [];
    throw error;
  }
  const messages: OutboxMessage[] = [];
  for (const name of names) {
    if (!name.endsWith('.json') || name.startsWith('.')) continue;
    try {
      const parsed: unknown = JSON.parse(await readFile(path.join(outboxDir, name), 'utf8'));
      if (isOutboxMessage(parsed)) messages.push(parsed);
    } catch {
      // A file someone else dropped in the folder is not ours to show.
    }
  }
  return messages.sort((a, b) =>
    a.receivedAt === b.receivedAt ? b.id.localeCompare(a.id) : b.receivedAt.localeCompare(a.receivedAt),
  );
}

/** Starts the fake SMTP server; resolves once it listens. */
export async function startFakeSmtp({
  host = '127.0.0.1',
  port,
  outboxDir,
  onMessage,
  onError,
}: FakeSmtpOptions): Promise<FakeSmtp> {
  await mkdir(outboxDir, { recursive: true });

  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS'],
    size: MAX_MESSAGE_BYTES,
    logger: false,
    onData(stream, session, callback) {
      const receivedAt = new Date();
      simpleParser(stream)
        .then(async (parsed) => {
          const message: OutboxMessage = {
            id: `${fileStamp(receivedAt)}-${randomBytes(4).toString('hex')}`,
            receivedAt: receivedAt.toISOString(),
            from: addressText(parsed.from) || envelopeAddress(session.envelope.mailFrom),
            // The envelope, not the headers: it includes Bcc and is where the mail really went.
            to: session.envelope.rcptTo.map((r) => r.address),
            subject: parsed.subject ?? '',
            text: parsed.text ?? '',
            html: typeof parsed.html === 'string' ? parsed.html : null,
          };
          await store(outboxDir, message);
          onMessage?.(message);
          callback();
        })
        .catch((error: unknown) => {
          const err = error instanceof Error ? error : new Error(String(error));
          onError?.(err);
          callback(
            Object.assign(new Error(`could not store the message: ${err.message}`), { responseCode: 451 }),
          );
        });
    },
  });

  await new Promise<void>((resolve, reject) => {
    const onListenError = (error: Error) => reject(error);
    server.once('error', onListenError);
    server.listen(port, host, () => {
      server.off('error', onListenError);
      resolve();
    });
  });
  // Later errors (a client dropping the connection) must not crash the process.
  server.on('error', (error: Error) => onError?.(error));

  const address = server.server.address() as AddressInfo;
  return {
    port: address.port,
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
    list: () => readOutbox(outboxDir),
  };
}
