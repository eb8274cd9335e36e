/**
 * The daily pass (issue 13), run by a pg-boss schedule once a day (worker/daily-pass.ts) and
 * by a supervisor on demand (`POST /api/housekeeping/run`). Every step is idempotent on its
 * own, so a second run the same day (or a retry after a crash) does nothing new:
 *
 * 1. Requests past their due date are marked expired; a case that waited only for that
 *    reply goes back to review with the history line "No reply by <date>" (the examiner
 *    learns of it from the digest).
 * 2. One reminder per waiting request due within REMINDER_DAYS_BEFORE days (default 7):
 *    PDF and e-mail, the same records as the first letter. The reply link is stored only as
 *    a hash, so the reminder carries a fresh link that replaces the first one.
 * 3. One digest e-mail per examiner per day, of their cases needing action: replies
 *    received and requests expired since the last pass, deadlines inside 90 days.
 *
 * Each change is its own transaction, with the mail sent as its last step (as for letters:
 * a refused send stores nothing, and the next run tries again).
 */
import { randomBytes, randomUUID } from 'node:crypto';
import type { DataSource } from 'typeorm';
import { maskTin } from '../../shared/access-log';
import { DEFAULT_REMINDER_DAYS_BEFORE, type HousekeepingResult } from '../../shared/housekeeping';
import { addDays, longDate, OFFICE } from '../../shared/letters';
import { DEADLINE_NEAR_DAYS } from '../../shared/returns/assessment-deadline';
import { recordAccess } from '../access-log/access-log.service';
import type { AuditContext } from '../access-log/audit-context';
import { insertCaseEvent } from '../cases/case.repository';
import { endReplyWait, lockCase } from '../cases/case-workflow';
import { dropQueueTotals } from '../cases/case-queue.service';
import { now, today } from '../clock';
import type { Mailer } from '../mail/mailer';
import { insertLetter, setLetterMessageId } from '../letters/letters.repository';
import { hashReplyToken, maskedReplyUrl, sha256 } from '../letters/letters.service';
import { reminderMail, renderReminderPdf, type ReminderLetter } from '../letters/pdf/reminder-pdf';
import {
  completeByDueDate,
  expireRequest,
  findDigests,
  findRequestsPastDue,
  findRequestsToRemind,
  otherRequestWaiting,
  recordDigest,
  recordRun,
  takeForReminder,
  type DigestFacts,
} from './housekeeping.repository';

/** What the pass needs. */
export interface HousekeepingDeps {
  dataSource: DataSource;
  mailer: Mailer;
  /** Base of links in letters and digests (config.publicUrl). */
  publicUrl: string;
}

/** Settings read from the environment, checked. */
export interface HousekeepingSettings {
  reminderDaysBefore: number;
  /** Hour of the office day (0–23) when the scheduled pass runs. */
  hour: number;
  /** Domain for an examiner with no e-mail address on file: username@domain. */
  staffMailDomain: string;
}

/** Reads REMINDER_DAYS_BEFORE, HOUSEKEEPING_HOUR and STAFF_MAIL_DOMAIN; a bad value throws a clear error. */
export function housekeepingSettings(env: Record<string, string | undefined> = process.env): HousekeepingSettings {
  const int = (name: string, def: number, min: number, max: number) => {
    const raw = env[name]?.trim();
    if (!raw) return def;
    const n = Number(raw);
    if (!Number.isInteger(n) || n < min || n > max) throw new Error(`${name}=${JSON.stringify(raw)} must be a whole number from ${min} to ${max}`);
    return n;
  };
  return {
    reminderDaysBefore: int('REMINDER_DAYS_BEFORE', DEFAULT_REMINDER_DAYS_BEFORE, 1, 60),
    hour: int('HOUSEKEEPING_HOUR', 6, 0, 23),
    staffMailDomain: env.STAFF_MAIL_DOMAIN?.trim() || 'staff.aldermere.example',
  };
}

const AUDIT: AuditContext = { actor: null, route: 'daily pass' };

/** Runs the pass for the office clock's today. */
export async function runDailyPass(deps: HousekeepingDeps, settings: HousekeepingSettings = housekeepingSettings()): Promise<HousekeepingResult> {
  const day = today();
  const ds = deps.dataSource;
  const { expired: requestsExpired, completed: completedByDate } = await expireOverdue(ds, day);
  const remindersSent = await sendReminders(deps, day, settings.reminderDaysBefore);
  const { digestsSent, deadlineWarnings } = await sendDigests(deps, day, settings.staffMailDomain);
  const result = { remindersSent, requestsExpired, digestsSent, deadlineWarnings };
  await recordRun(ds, day, result, now());
  if (requestsExpired || completedByDate) dropQueueTotals(ds);
  return { day, ...result };
}

/** Expires overdue requests; ends by date those that took sends. Counts both. */
async function expireOverdue(ds: DataSource, day: string): Promise<{ expired: number; completed: number }> {
  let expired = 0;
  let completed = 0;
  for (const r of await findRequestsPastDue(ds, day)) {
    const done = await ds.transaction(async (m) => {
      const c = await lockCase(m, r.caseId);
      // Records that came in parts: the date ends the sends, and the case goes back to review
      // as for a reply the taxpayer said was complete. Not an expiry.
      const sends = await completeByDueDate(m, r.id);
      if (!sends && !(await expireRequest(m, r.id))) return null;
      const base = { documentRequestId: r.id, letterId: r.letterId, dueDate: r.dueDate };
      const detail = sends ? { ...base, sends, completedBy: 'due-date' } : base;
      await endReplyWait(m, c, sends ? 'reply-received' : 'reply-overdue', detail, !(await otherRequestWaiting(m, r.caseId, r.id, day)), now());
      await recordAccess(m, AUDIT, {
        action: 'change',
        recordType: 'document_request',
        recordId: r.id,
        taxpayerId: r.taxpayerId,
        taxpayerLabel: maskTin(String(r.tin)),
        detail: sends
          ? `due date ${r.dueDate} passed after ${sends} send${sends === 1 ? '' : 's'}: reply complete`
          : `no reply by ${r.dueDate}: request expired`,
      });
      return sends ? 'completed' : 'expired';
    });
    if (done === 'expired') expired++;
    if (done === 'completed') completed++;
  }
  return { expired, completed };
}

async function sendReminders(deps: HousekeepingDeps, day: string, daysBefore: number): Promise<number> {
  const ds = deps.dataSource;
  let n = 0;
  for (const r of await findRequestsToRemind(ds, day, addDays(day, daysBefore))) {
    const letterId = randomUUID();
    const token = randomBytes(32).toString('base64url');
    const sent = await ds
      .transaction(async (m) => {
        await lockCase(m, r.caseId);
        if (!(await takeForReminder(m, r.id, hashReplyToken(token), now()))) return false;
        const reference = `RR-${letterId.slice(0, 8).toUpperCase()}`;
        const letter: ReminderLetter = {
          reference,
          firstReference: `DR-${r.letterId.slice(0, 8).toUpperCase()}`,
          date: day,
          firstDate: r.sentOn,
          taxpayerName: r.taxpayerName,
          postalAddress: r.postalAddress,
          taxYear: Number(r.taxYear),
          returnRef: r.returnRef,
          items: r.items,
          dueDate: r.dueDate,
          replyUrl: `${deps.publicUrl}/reply/${token}`,
        };
        const sentPdf = await renderReminderPdf(letter);
        const officePdf = await renderReminderPdf({ ...letter, replyUrl: maskedReplyUrl(deps.publicUrl) });
        const fileName = `reminder-${reference}.pdf`;
        const mail = reminderMail(letter, r.email, sentPdf, fileName);
        await insertLetter(m, {
          id: letterId,
          caseId: r.caseId,
          kind: 'reminder',
          fileName,
          pdf: officePdf,
          sha256: sha256(officePdf),
          sentSha256: sha256(sentPdf),
          recipient: r.email,
          subject: String(mail.subject),
          messageId: null,
          createdBy: null,
        });
        await insertCaseEvent(m, {
          caseId: r.caseId,
          actorId: null,
          kind: 'reminder',
          detail: { letterId, documentRequestId: r.id, dueDate: r.dueDate },
          from: null,
          to: null,
        });
        await recordAccess(m, AUDIT, {
          action: 'change',
          recordType: 'document_request',
          recordId: r.id,
          taxpayerId: r.taxpayerId,
          taxpayerLabel: maskTin(String(r.tin)),
          detail: 'reminder sent; the reply link was replaced',
        });
        const info = await deps.mailer.transport.sendMail({ ...mail, from: deps.mailer.from });
        await setLetterMessageId(m, letterId, info.messageId ?? null);
        return true;
      })
      .catch((e) => {
        // The mail server refused: nothing was kept (the old link still works); the next pass tries again.
        console.error(`[housekeeping] reminder for request ${r.id} not sent:`, e instanceof Error ? e.message : e);
        return false;
      });
    if (sent) n++;
  }
  return n;
}

/** The digest's text: cases by return reference and links to them; no taxpayer names or TINs. */
export function digestText(d: DigestFacts, day: string, publicUrl: string): { subject: string; text: string } {
  const link = (id: string) => `${publicUrl}/cases/${id}`;
  const part = (title: string, rows: string[]) => (rows.length ? [title, ...rows.map((r) => `  - ${r}`), ''] : []);
  const text = [
    `Good morning ${d.displayName},`,
    '',
    `Your cases needing action on ${longDate(day)}:`,
    '',
    ...part(
      `Replies received (${d.replies.length}):`,
      d.replies.map((c) => `${c.returnRef}: ${link(c.caseId)}`),
    ),
    ...part(
      `Requests with no reply by their date (${d.expired.length}), now back in review:`,
      d.expired.map((c) => `${c.returnRef}: ${link(c.caseId)}`),
    ),
    ...part(
      `Assessment deadlines within ${DEADLINE_NEAR_DAYS} days (${d.deadlines.length}):`,
      d.deadlines.map((c) => `${c.returnRef}, assess by ${longDate(c.assessBy)}: ${link(c.caseId)}`),
    ),
    `${OFFICE.name}, Plumbline daily pass`,
  ].join('\n');
  return { subject: `Your cases needing action, ${longDate(day)}`, text };
}

async function sendDigests(deps: HousekeepingDeps, day: string, domain: string): Promise<{ digestsSent: number; deadlineWarnings: number }> {
  const ds = deps.dataSource;
  let digestsSent = 0;
  let deadlineWarnings = 0;
  for (const d of await findDigests(ds, day, addDays(day, DEADLINE_NEAR_DAYS))) {
    if (!d.replies.length && !d.expired.length && !d.deadlines.length) continue;
    const to = d.email ?? `${d.username}@${domain}`;
    const { subject, text } = digestText(d, day, deps.publicUrl);
    const sent = await ds
      .transaction(async (m) => {
        if (!(await recordDigest(m, day, d.examinerId))) return false;
        await deps.mailer.transport.sendMail({ from: deps.mailer.from, to, subject, text });
        return true;
      })
      .catch((e) => {
        console.error(`[housekeeping] digest for ${d.username} not sent:`, e instanceof Error ? e.message : e);
        return false;
      });
    if (sent) {
      digestsSent++;
      deadlineWarnings += d.deadlines.length;
    }
  }
  return { digestsSent, deadlineWarnings };
}
