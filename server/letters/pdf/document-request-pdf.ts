/**
 * The document-request letter (docs/design.md#letters-and-replies): what we would like to
 * see, why in plain words, by when, how to send it, and whom to ask. It asks; it does not accuse. It never
 * mentions scores, digit tests or anything that reads as suspicion (docs/design.md#cautions).
 */
import { OFFICE, REPLY_FILE_WORDS, REPLY_MAX_FILE_BYTES, REPLY_MAX_FILES } from '../../../shared/letters';
import {
  callout,
  contentWidth,
  F,
  INK,
  letterClosing,
  numberedItems,
  quoteReference,
  renderTaxpayerLetter,
  replyLinkBox,
  type TaxpayerLetterBase,
} from './pdf-base';

/** Everything the letter says. */
export interface DocumentRequestLetter extends TaxpayerLetterBase {
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
  howToSend: `Please upload copies through your personal reply link. You do not need an account. You can send up to ${REPLY_MAX_FILES} files at a time (${REPLY_FILE_WORDS}, up to ${REPLY_MAX_FILE_BYTES / 1024 / 1024} MB each), in one go or in several parts until the end of the due date; when you have sent everything, please say so on the reply page. We confirm each send by e-mail. The link is for this request only; please do not share it.`,
  missing:
    'If a record does not exist or you cannot find it, please tell us in a short note uploaded with the other files, or contact us. A brief explanation is welcome.',
  help: `If you need more time or have a question, please contact us before the due date: telephone ${OFFICE.phone} (${OFFICE.hours}) or e-mail ${OFFICE.email}. You can also write to us at ${OFFICE.address.join(', ')}.`,
  thanks: 'Thank you for your help.',
};

/** Renders the letter as a PDF. */
export function renderDocumentRequestPdf(l: DocumentRequestLetter): Promise<Buffer> {
  return renderTaxpayerLetter(l, letterWording.subject(l), (doc) => {
    doc.text(letterWording.opening(l), { width: contentWidth(doc), lineGap: 1.5 });
    doc.moveDown(0.6);
    callout(doc, 'This is a request for records, not a decision', letterWording.notADecision.replace(/^This is a request for records, not a decision\. /, ''));

    doc.moveDown(0.3);
    doc
      .font(F.bold)
      .fontSize(11)
      .fillColor(INK)
      .text('Please send us copies of:', doc.page.margins.left, doc.y, { width: contentWidth(doc) });
    doc.moveDown(0.3);
    numberedItems(doc, l.items);
    replyLinkBox(doc, l.dueDate, letterWording.howToSend, l.replyUrl);
    letterClosing(doc, [letterWording.missing, letterWording.help, quoteReference(l.reference), letterWording.thanks], l.signedBy);
  });
}
