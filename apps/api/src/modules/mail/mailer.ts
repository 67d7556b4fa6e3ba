import nodemailer from 'nodemailer';
import type { Logger } from 'pino';
import type { Env } from '../../config/env.js';

export type MailMessage = { to: string | string[]; subject: string; text: string };
export type Mailer = { send(message: MailMessage): Promise<boolean> };

/**
 * Sends through SMTP (the local fake server in development and tests). Returns false rather
 * than throwing, so a mail outage never undoes a committed change; callers report it.
 */
export function createMailer(env: Env, log?: Logger): Mailer {
  const transport = nodemailer.createTransport({
    host: env.SMTP_HOST,
    port: env.SMTP_PORT,
    secure: false,
    ignoreTLS: env.NODE_ENV !== 'production',
  });
  return {
    async send(message) {
      try {
        await transport.sendMail({ from: env.MAIL_FROM, ...message });
        return true;
      } catch (err) {
        log?.error({ err, subject: message.subject }, 'mail could not be sent');
        return false;
      }
    },
  };
}
