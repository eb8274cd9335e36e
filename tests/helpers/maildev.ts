/**
 * The test MailDev's REST API (web port PLUMBLINE_TEST_MAIL_WEB_PORT, routes under /api):
 * list messages and download attachments. Test files run in parallel and share one
 * MailDev, so tests find their messages by a recipient address of their own and never
 * empty the inbox (that would race with another file's mail).
 */
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';

const base = () => `http://127.0.0.1:${process.env.PLUMBLINE_TEST_MAIL_WEB_PORT ?? '1081'}/api`;

/** One message as MailDev lists it. */
export interface MailMessage {
  id: string;
  subject: string;
  text?: string;
  html?: string;
  from: { address: string; name: string }[];
  to: { address: string; name: string }[];
  headers: Record<string, string>;
  attachments?: { filename: string; generatedFileName: string; contentType: string; size: number }[];
}

/** Messages addressed to `to`. */
export async function mailTo(to: string): Promise<MailMessage[]> {
  const res = await fetch(`${base()}/email`);
  if (!res.ok) throw new Error(`MailDev GET /email answered ${res.status}`);
  const all = (await res.json()) as MailMessage[];
  return all.filter((m) => m.to.some((a) => a.address.toLowerCase() === to.toLowerCase()));
}

/**
 * Waits until a message to `to` has arrived (MailDev stores it a moment after SMTP accepts it).
 * The default wait is sized for a busy two-core machine, where MailDev (one node process shared
 * by every test file) can take many seconds to store and list a message; a list request that
 * fails meanwhile counts as "not yet".
 */
export async function waitForMail(to: string, timeoutMs = 60_000): Promise<MailMessage> {
  const until = Date.now() + timeoutMs;
  let lastError = '';
  for (;;) {
    try {
      const found = await mailTo(to);
      if (found.length) return found[found.length - 1];
      lastError = '';
    } catch (e) {
      lastError = e instanceof Error ? e.message : String(e);
    }
    if (Date.now() > until) throw new Error(`no mail to ${to} within ${timeoutMs} ms${lastError ? ` (last MailDev request failed: ${lastError})` : ''}`);
    await new Promise((r) => setTimeout(r, 150));
  }
}

/** Downloads an attachment by the name MailDev stored it under. */
export async function attachment(message: MailMessage, generatedFileName: string): Promise<Buffer> {
  const res = await fetch(`${base()}/email/${message.id}/attachment/${encodeURIComponent(generatedFileName)}`);
  if (!res.ok) throw new Error(`MailDev attachment answered ${res.status}`);
  return Buffer.from(await res.arrayBuffer());
}

/** The text of a PDF as poppler's pdftotext reads it, with runs of white space made single spaces. */
export function pdfText(pdf: Buffer): string {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'plumbline-pdf-'));
  try {
    const file = path.join(dir, 'in.pdf');
    fs.writeFileSync(file, pdf);
    return execFileSync('pdftotext', ['-enc', 'UTF-8', file, '-'], { encoding: 'utf8' }).replace(/\s+/g, ' ');
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
}
