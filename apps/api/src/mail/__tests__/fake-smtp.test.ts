import { mkdtemp, readdir, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import nodemailer from 'nodemailer';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { readOutbox, startFakeSmtp, type FakeSmtp } from '../fake-smtp.js';

describe('fake SMTP server', () => {
  let outboxDir: string;
  let smtp: FakeSmtp;

  beforeEach(async () => {
    outboxDir = await mkdtemp(path.join(tmpdir(), 'counterpoise-outbox-'));
    smtp = await startFakeSmtp({ port: 0, outboxDir });
  });

  afterEach(async () => {
    await smtp.close();
    await rm(outboxDir, { recursive: true, force: true });
  });

  function transport() {
    return nodemailer.createTransport({ host: '127.0.0.1', port: smtp.port, secure: false, ignoreTLS: true });
  }

  it('when a message is sent through nodemailer, then it is kept as JSON and read back', async () => {
    expect(smtp.port).toBeGreaterThan(0);
    await transport().sendMail({
      from: 'Counterpoise <no-reply@counterpoise.example>',
      to: 'coordinator@counterpoise.example',
      bcc: 'auditor@counterpoise.example',
      subject: 'You are invited to Harbour Lung Study',
      text: 'Open this link to choose a password.',
      html: '<p>Open this link to choose a <b>password</b>.</p>',
    });

    const messages = await smtp.list();
    expect(messages).toHaveLength(1);
    const [message] = messages;
    expect(message).toMatchObject({
      from: 'Counterpoise <no-reply@counterpoise.example>',
      to: ['coordinator@counterpoise.example', 'auditor@counterpoise.example'],
      subject: 'You are invited to Harbour Lung Study',
      html: '<p>Open this link to choose a <b>password</b>.</p>',
    });
    expect(message?.text.trim()).toBe('Open this link to choose a password.');
    expect(Number.isNaN(Date.parse(message?.receivedAt ?? ''))).toBe(false);

    // One file named after the id, no temporary file left behind.
    const files = await readdir(outboxDir);
    expect(files).toEqual([`${message?.id}.json`]);
    expect(message?.id).toMatch(/^\d{4}-\d{2}-\d{2}T\d{2}-\d{2}-\d{2}-\d{3}Z-[0-9a-f]{8}$/);
    const onDisk: unknown = JSON.parse(await readFile(path.join(outboxDir, files[0] ?? ''), 'utf8'));
    expect(onDisk).toEqual(message);

    expect(await readOutbox(outboxDir)).toEqual(messages);
  });

  it('when several messages arrive, then list() gives the newest first', async () => {
    const mailer = transport();
    for (const subject of ['first', 'second', 'third']) {
      await mailer.sendMail({
        from: 'a@counterpoise.example',
        to: 'b@counterpoise.example',
        subject,
        text: subject,
      });
    }
    const subjects = (await smtp.list()).map((m) => m.subject);
    expect(subjects).toEqual(['third', 'second', 'first']);
  });

  it('when a message has no HTML part, then html is null', async () => {
    await transport().sendMail({
      from: 'a@counterpoise.example',
      to: 'b@counterpoise.example',
      subject: 'plain',
      text: 'only text',
    });
    const [message] = await smtp.list();
    expect(message?.html).toBeNull();
  });

  it('when the outbox folder holds foreign or unfinished files, then readOutbox skips them', async () => {
    await writeFile(path.join(outboxDir, 'notes.txt'), 'not a message');
    await writeFile(path.join(outboxDir, 'broken.json'), '{ not json');
    await writeFile(path.join(outboxDir, 'other.json'), JSON.stringify({ hello: 'world' }));
    await writeFile(path.join(outboxDir, '.half.json.tmp'), '{');
    expect(await readOutbox(outboxDir)).toEqual([]);
  });

  it('when the outbox folder does not exist, then readOutbox gives an empty list', async () => {
    expect(await readOutbox(path.join(outboxDir, 'missing'))).toEqual([]);
  });
});
