/**
 * Outgoing mail through the configured SMTP server (MailDev on loopback locally).
 */
import nodemailer, { type Transporter } from 'nodemailer';
import type { Config } from '../config';

/** What the rest of the server needs from mail. */
export interface Mailer {
  transport: Transporter;
  from: string;
  /** Checks the SMTP server answers; resolves with a reason instead of throwing. */
  check(): Promise<{ ok: boolean; detail: string }>;
  close(): void;
}

/** Builds the mailer for a configuration. */
export function createMailer(config: Pick<Config, 'SMTP_HOST' | 'SMTP_PORT' | 'MAIL_FROM'>): Mailer {
  const transport = nodemailer.createTransport({
    host: config.SMTP_HOST,
    port: config.SMTP_PORT,
    secure: false,
    ignoreTLS: config.SMTP_HOST === '127.0.0.1' || config.SMTP_HOST === 'localhost',
    connectionTimeout: 3000,
    greetingTimeout: 3000,
  });
  const where = `${config.SMTP_HOST}:${config.SMTP_PORT}`;
  return {
    transport,
    from: config.MAIL_FROM,
    async check() {
      try {
        await transport.verify();
        return { ok: true, detail: `SMTP server answering on ${where}` };
      } catch (e) {
        const msg = e instanceof Error ? e.message : String(e);
        return { ok: false, detail: `SMTP server on ${where} not reachable: ${msg}` };
      }
    },
    close() {
      transport.close();
    },
  };
}
