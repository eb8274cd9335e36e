/**
 * The reminder (issue 13): one friendly note a few days before a request's due date. It
 * repeats what the first letter asked (nothing new), gives the date and a fresh personal
 * link that replaces the first one (the link is stored only as a hash, so the first one
 * cannot be sent again), and says whom to ask for more time. Like every letter it accuses
 * no one and never mentions scores, digit tests or anything that reads as suspicion
 * (docs/design.md#cautions).
 */
import type { SendMailOptions } from 'nodemailer';
import { longDate, OFFICE } from '../../../shared/letters';
import { contentWidth, F, letterClosing, numberedItems, quoteReference, renderTaxpayerLetter, replyLinkBox, type TaxpayerLetterBase } from './pdf-base';

/** Everything the reminder says. */
export interface ReminderLetter extends TaxpayerLetterBase {
  /** Reference of the first letter. */
  firstReference: string;
  /** Date of the first letter (YYYY-MM-DD). */
  firstDate: string;
  items: readonly string[];
  dueDate: string;
  /** The new reply link (the real one in the mailed copy, masked in the office copy). */
  replyUrl: string;
}

/** The paragraphs, shared by the PDF and the e-mail. */
export const reminderWording = {
  subject: (l: Pick<ReminderLetter, 'taxYear'>) => `Reminder: records for your ${l.taxYear} income-tax return`,
  opening: (l: Pick<ReminderLetter, 'firstDate' | 'firstReference' | 'dueDate'>) =>
    `On ${longDate(l.firstDate)} we wrote to ask for some records (our reference ${l.firstReference}). This is a friendly reminder that the date for sending them is ${longDate(l.dueDate)}. If you have already sent them, thank you, and please disregard this note.`,
  same: 'We are asking for the same records as before, nothing more:',
  link: 'Please use the personal link below to upload them. It replaces the link in our first letter, which no longer works. You do not need an account.',
  help: `If you need more time or have a question, please contact us before the date: telephone ${OFFICE.phone} (${OFFICE.hours}) or e-mail ${OFFICE.email}.`,
  thanks: 'Thank you for your help.',
};

/** Renders the reminder as a PDF. */
export function renderReminderPdf(l: ReminderLetter): Promise<Buffer> {
  return renderTaxpayerLetter(l, reminderWording.subject(l), (doc) => {
    const w = contentWidth(doc);
    doc.text(reminderWording.opening(l), { width: w, lineGap: 1.5 });
    doc.moveDown(0.6);
    doc.font(F.bold).text(reminderWording.same, { width: w });
    doc.moveDown(0.3);
    numberedItems(doc, l.items);
    replyLinkBox(doc, l.dueDate, reminderWording.link, l.replyUrl);
    letterClosing(doc, [reminderWording.help, quoteReference(l.reference), reminderWording.thanks]);
  });
}

/** The e-mail that carries the reminder (the caller adds `from`). */
export function reminderMail(l: ReminderLetter, to: string, pdf: Buffer, fileName: string): SendMailOptions {
  const text = [
    `Dear ${l.taxpayerName},`,
    '',
    reminderWording.opening(l),
    '',
    reminderWording.same,
    ...l.items.map((it, i) => `  ${i + 1}. ${it}`),
    '',
    reminderWording.link,
    l.replyUrl,
    '',
    reminderWording.help,
    '',
    `The reminder is attached as a PDF (our reference ${l.reference}).`,
    '',
    'Yours sincerely,',
    `${OFFICE.unit}, ${OFFICE.name}`,
  ].join('\n');
  return {
    to,
    subject: reminderWording.subject(l),
    text,
    replyTo: OFFICE.email,
    attachments: [{ filename: fileName, content: pdf, contentType: 'application/pdf' }],
  };
}
