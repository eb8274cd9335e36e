/**
 * The document-request letter (docs/design.md#letters-and-replies): what we would like to
 * see, why in plain words, by when, how to send it, and whom to ask. It asks; it does not accuse. It never
 * mentions scores, digit tests or anything that reads as suspicion (docs/design.md#cautions).
 */
import { longDate, OFFICE, REPLY_MAX_FILE_BYTES, REPLY_MAX_FILES } from '../../../shared/letters';
import { callout, contentWidth, F, figureFace, footers, INK, INK_SOFT, keepTogether, letterhead, newPdf, pdfBytes, PAPER, BRASS, printable } from './pdf-base';

/** Everything the letter says. */
export interface DocumentRequestLetter {
  /** Our reference, e.g. "DR-3F2A9C1B", quoted back by the taxpayer. */
  reference: string;
  /** Date of the letter (YYYY-MM-DD). */
  date: string;
  taxpayerName: string;
  postalAddress: string | null;
  taxYear: number;
  returnRef: string;
  items: readonly string[];
  dueDate: string;
  /** The reply link as printed: the real one in the mailed copy, a masked one in the office copy. */
  replyUrl: string;
  /** Who signs: the examiner's name. */
  signedBy: string;
}

/** The paragraphs of the letter, shared by the PDF and the e-mail so both say the same. */
export const letterWording = {
  subject: (l: Pick<DocumentRequestLetter, 'taxYear'>) => `Request for records: your ${l.taxYear} income-tax return`,
  opening: (l: Pick<DocumentRequestLetter, 'taxYear'>) =>
    `We are reviewing your ${l.taxYear} income-tax return and would like to see the records listed below. We review a number of returns each year in this way, and the records help us understand the figures you reported.`,
  notADecision:
    'This is a request for records, not a decision. We have not reached any conclusion about your return, and this letter does not change the tax you owe.',
  howToSend: `Please upload copies through your personal reply link. You do not need an account. You can send up to ${REPLY_MAX_FILES} files (PDF, JPEG or PNG, up to ${REPLY_MAX_FILE_BYTES / 1024 / 1024} MB each), once, until the end of the due date. The link is for this request only; please do not share it.`,
  missing:
    'If a record does not exist or you cannot find it, please tell us in a short note uploaded with the other files, or contact us. A brief explanation is welcome.',
  help: `If you need more time or have a question, please contact us before the due date: telephone ${OFFICE.phone} (${OFFICE.hours}) or e-mail ${OFFICE.email}. You can also write to us at ${OFFICE.address.join(', ')}.`,
  thanks: 'Thank you for your help.',
};

/** Renders the letter as a PDF. */
export async function renderDocumentRequestPdf(l: DocumentRequestLetter): Promise<Buffer> {
  const doc = newPdf({ title: letterWording.subject(l), subject: `Reference ${l.reference}`, author: OFFICE.name });
  letterhead(doc, [`Our reference: ${l.reference}`]);
  const x = doc.page.margins.left;
  const w = contentWidth(doc);

  // Address block and date.
  const addressLines = [l.taxpayerName, ...(l.postalAddress ? l.postalAddress.split(/\s*[,\n]\s*/).filter(Boolean) : [])];
  const top = doc.y;
  doc
    .font(F.body)
    .fontSize(10.5)
    .fillColor(INK)
    .text(addressLines.join('\n'), x, top, { width: w * 0.6 });
  const afterAddress = doc.y;
  doc
    .font(F.body)
    .fontSize(10.5)
    .fillColor(INK)
    .text(longDate(l.date), x + w * 0.6, top, { width: w * 0.4, align: 'right' });
  doc.y = Math.max(afterAddress, doc.y) + 18;
  doc.x = x;

  doc.font(F.bold).fontSize(13).fillColor(INK).text(letterWording.subject(l), x, doc.y, { width: w });
  doc.font(F.body).fontSize(9.5).fillColor(INK_SOFT).text(`Return reference ${l.returnRef}`, { width: w });
  doc.moveDown(0.8);

  doc.font(F.body).fontSize(10.5).fillColor(INK).text(`Dear ${l.taxpayerName},`, { width: w });
  doc.moveDown(0.6);
  doc.text(letterWording.opening(l), { width: w, lineGap: 1.5 });
  doc.moveDown(0.6);
  callout(doc, 'This is a request for records, not a decision', letterWording.notADecision.replace(/^This is a request for records, not a decision\. /, ''));

  // The records asked for, numbered.
  doc.moveDown(0.3);
  doc.font(F.bold).fontSize(11).fillColor(INK).text('Please send us copies of:', x, doc.y, { width: w });
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
      .text(item, x + 24, y, { width: w - 24, lineGap: 1 });
    doc.y += 3;
  });
  doc.moveDown(0.6);

  // Due date and the link, in one shaded block so neither is missed.
  const dueLine = `By ${longDate(l.dueDate)}`;
  doc.font(F.bold).fontSize(12);
  const hDue = doc.heightOfString(dueLine, { width: w - 24 });
  doc.font(F.body).fontSize(10);
  const hHow = doc.heightOfString(letterWording.howToSend, { width: w - 24 });
  const urlFace = figureFace(l.replyUrl);
  doc.font(urlFace).fontSize(9);
  const hUrl = doc.heightOfString(l.replyUrl, { width: w - 24 });
  const boxH = hDue + hHow + hUrl + 40;
  keepTogether(doc, boxH + 8);
  const by = doc.y;
  doc.save().rect(x, by, w, boxH).fill(PAPER).rect(x, by, 4, boxH).fill(INK).restore();
  doc
    .font(F.bold)
    .fontSize(12)
    .fillColor(INK)
    .text(dueLine, x + 16, by + 10, { width: w - 24 });
  doc
    .font(F.body)
    .fontSize(10)
    .fillColor(INK)
    .text(letterWording.howToSend, x + 16, doc.y + 4, { width: w - 24, lineGap: 1 });
  doc
    .font(F.bold)
    .fontSize(9.5)
    .text('Your reply link:', x + 16, doc.y + 6, { width: w - 24 });
  doc
    .font(urlFace)
    .fontSize(9)
    .fillColor(INK)
    .text(l.replyUrl, x + 16, doc.y + 1, { width: w - 24 });
  doc.x = x;
  doc.y = by + boxH + 12;

  doc.font(F.body).fontSize(10.5).fillColor(INK);
  for (const p of [letterWording.missing, letterWording.help, `Please quote our reference ${l.reference} in any message.`, letterWording.thanks]) {
    keepTogether(doc, doc.heightOfString(p, { width: w }) + 8);
    doc.text(p, x, doc.y, { width: w, lineGap: 1.5 });
    doc.moveDown(0.5);
  }
  doc.moveDown(0.5);
  keepTogether(doc, 60);
  doc.text('Yours sincerely,', x, doc.y, { width: w });
  doc.moveDown(1.2);
  doc.font(F.bold).text(l.signedBy, { width: w });
  doc.font(F.body).fillColor(INK_SOFT).text(`${OFFICE.unit}, ${OFFICE.name}`, { width: w });

  footers(doc, `${OFFICE.name} · ${OFFICE.phone} · Reference ${l.reference}`);
  return pdfBytes(doc);
}
