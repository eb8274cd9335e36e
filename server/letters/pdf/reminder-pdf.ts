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
import { contentWidth, F, figureFace, footers, INK, INK_SOFT, keepTogether, letterhead, newPdf, pdfBytes, PAPER, BRASS, printable } from './pdf-base';

/** Everything the reminder says. */
export interface ReminderLetter {
  reference: string;
  /** Reference of the first letter. */
  firstReference: string;
  /** Date of the reminder and of the first letter (YYYY-MM-DD). */
  date: string;
  firstDate: string;
  taxpayerName: string;
  postalAddress: string | null;
  taxYear: number;
  returnRef: string;
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
export async function renderReminderPdf(l: ReminderLetter): Promise<Buffer> {
  const doc = newPdf({ title: reminderWording.subject(l), subject: `Reference ${l.reference}`, author: OFFICE.name });
  letterhead(doc, [`Our reference: ${l.reference}`]);
  const x = doc.page.margins.left;
  const w = contentWidth(doc);
  const top = doc.y;
  const address = [l.taxpayerName, ...(l.postalAddress ? l.postalAddress.split(/\s*[,\n]\s*/).filter(Boolean) : [])];
  doc
    .font(F.body)
    .fontSize(10.5)
    .fillColor(INK)
    .text(address.join('\n'), x, top, { width: w * 0.6 });
  const after = doc.y;
  doc.text(longDate(l.date), x + w * 0.6, top, { width: w * 0.4, align: 'right' });
  doc.y = Math.max(after, doc.y) + 18;
  doc.x = x;
  doc.font(F.bold).fontSize(13).fillColor(INK).text(reminderWording.subject(l), x, doc.y, { width: w });
  doc.font(F.body).fontSize(9.5).fillColor(INK_SOFT).text(`Return reference ${l.returnRef}`, { width: w });
  doc.moveDown(0.8);
  doc.font(F.body).fontSize(10.5).fillColor(INK).text(`Dear ${l.taxpayerName},`, { width: w });
  doc.moveDown(0.6);
  doc.text(reminderWording.opening(l), { width: w, lineGap: 1.5 });
  doc.moveDown(0.6);
  doc.font(F.bold).text(reminderWording.same, { width: w });
  doc.moveDown(0.3);
  l.items.map(printable).forEach((item, i) => {
    doc.font(F.body).fontSize(10.5);
    keepTogether(doc, doc.heightOfString(item, { width: w - 24 }) + 4);
    const y = doc.y;
    doc
      .font(F.bold)
      .fillColor(BRASS)
      .text(`${i + 1}.`, x + 4, y, { width: 18 });
    doc
      .font(F.body)
      .fillColor(INK)
      .text(item, x + 24, y, { width: w - 24 });
    doc.y += 3;
  });
  doc.moveDown(0.6);
  const face = figureFace(l.replyUrl);
  doc.font(F.body).fontSize(10);
  const h = doc.heightOfString(reminderWording.link, { width: w - 24 }) + doc.heightOfString(l.replyUrl, { width: w - 24 }) + 48;
  keepTogether(doc, h + 8);
  const by = doc.y;
  doc.save().rect(x, by, w, h).fill(PAPER).rect(x, by, 4, h).fill(INK).restore();
  doc
    .font(F.bold)
    .fontSize(12)
    .fillColor(INK)
    .text(`By ${longDate(l.dueDate)}`, x + 16, by + 10, { width: w - 24 });
  doc
    .font(F.body)
    .fontSize(10)
    .text(reminderWording.link, x + 16, doc.y + 4, { width: w - 24 });
  doc
    .font(F.bold)
    .fontSize(9.5)
    .text('Your reply link:', x + 16, doc.y + 6, { width: w - 24 });
  doc
    .font(face)
    .fontSize(9)
    .text(l.replyUrl, x + 16, doc.y + 1, { width: w - 24 });
  doc.x = x;
  doc.y = by + h + 12;
  doc.font(F.body).fontSize(10.5).fillColor(INK);
  for (const p of [reminderWording.help, `Please quote our reference ${l.reference} in any message.`, reminderWording.thanks]) {
    doc.text(p, x, doc.y, { width: w, lineGap: 1.5 });
    doc.moveDown(0.5);
  }
  doc.moveDown(0.5);
  doc.text('Yours sincerely,', x, doc.y, { width: w });
  doc.moveDown(0.8);
  doc.font(F.bold).text(`${OFFICE.unit}, ${OFFICE.name}`, { width: w });
  footers(doc, `${OFFICE.name} · ${OFFICE.phone} · Reference ${l.reference}`);
  return pdfBytes(doc);
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
