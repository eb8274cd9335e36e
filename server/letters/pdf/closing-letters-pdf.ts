/**
 * The letters that close the loop with the taxpayer (issue 13): the acknowledgement of each
 * send through the reply link, the no-change letter and the adjustment proposal. Like every
 * letter they accuse no one and never mention scores, digit tests, patterns or risk
 * (docs/design.md#cautions); a review is ordinary office work, and the proposal is a
 * proposal, with the taxpayer's time to answer and the office's wording of their rights.
 * Each wording object is shared by the PDF, the e-mail and the preview, so all three say the same.
 */
import type { SendMailOptions } from 'nodemailer';
import { longDate, OFFICE, PROPOSAL_ANSWER_DAYS } from '../../../shared/letters';
import { signedMoney, type CorrectedReturn } from '../../../shared/returns/corrections';
import { money } from '../../../shared/scoring/format';
import { callout, contentWidth, F, heading, letterClosing, printable, quoteReference, renderTaxpayerLetter, table, type TaxpayerLetterBase } from './pdf-base';

const help = `If you have a question, please contact us: telephone ${OFFICE.phone} (${OFFICE.hours}) or e-mail ${OFFICE.email}. You can also write to us at ${OFFICE.address.join(', ')}.`;

/** A file size in words for a letter: "12 KB", "2.4 MB". */
export function sizeWords(bytes: number): string {
  if (bytes < 1024 * 1024) return `${Math.max(1, Math.round(bytes / 1024))} KB`;
  return `${(bytes / 1024 / 1024).toFixed(1)} MB`;
}

// ---------------------------------------------------------------- acknowledgement

/** An acknowledgement of one send through the reply link. */
export interface AcknowledgementLetter extends TaxpayerLetterBase {
  /** Reference of the request the records answer. */
  requestReference: string;
  /** When the send arrived (ISO instant) and which send it was (1, 2, …). */
  receivedAt: string;
  part: number;
  files: readonly { fileName: string; size: number }[];
  /** The taxpayer said that is everything. */
  complete: boolean;
  dueDate: string;
}

/** The paragraphs of the acknowledgement. */
export const acknowledgementWording = {
  subject: (l: Pick<AcknowledgementLetter, 'taxYear'>) => `Records received: your ${l.taxYear} income-tax return`,
  opening: (l: AcknowledgementLetter) =>
    `Thank you. On ${longDate(l.receivedAt.slice(0, 10))} we received ${l.files.length === 1 ? 'one file' : `${l.files.length} files`} through your personal reply link, in answer to our request ${l.requestReference}${l.part > 1 ? ` (your send number ${l.part})` : ''}${l.files.length ? ':' : '.'}`,
  next: (l: AcknowledgementLetter) =>
    l.complete
      ? 'You told us that you have now sent everything. We will look at the records and write to you when we have finished.'
      : `You can send more records through the same link until the end of ${longDate(l.dueDate)}. When you have sent everything, please say so on the reply page, so that we can start looking at your records.`,
  onlyReceipt: 'This letter confirms that we received your records. It is not a decision about your return.',
  thanks: 'Thank you for your help.',
};

/** The acknowledgement's plain text (the e-mail and the preview). */
export function acknowledgementText(l: AcknowledgementLetter): string[] {
  const w = acknowledgementWording;
  return [w.opening(l), ...l.files.map((f, i) => `  ${i + 1}. ${f.fileName} (${sizeWords(f.size)})`), '', w.next(l), '', w.onlyReceipt, '', help];
}

/** Renders the acknowledgement as a PDF. */
export function renderAcknowledgementPdf(l: AcknowledgementLetter): Promise<Buffer> {
  const w = acknowledgementWording;
  return renderTaxpayerLetter(l, w.subject(l), (doc) => {
    const width = contentWidth(doc);
    doc.text(w.opening(l), { width, lineGap: 1.5 });
    doc.moveDown(0.4);
    if (l.files.length)
      table(
        doc,
        [
          { header: 'File', width: width - 90 },
          { header: 'Size', width: 90, align: 'right' },
        ],
        l.files.map((f) => [printable(f.fileName), sizeWords(f.size)]),
      );
    doc.moveDown(0.6);
    callout(doc, l.complete ? 'You have sent everything' : 'You can still send more', w.next(l));
    letterClosing(doc, [w.onlyReceipt, help, quoteReference(l.reference), w.thanks]);
  });
}

// ---------------------------------------------------------------- no change

/** The no-change letter. */
export interface NoChangeLetter extends TaxpayerLetterBase {
  /** The taxpayer sent records during the review. */
  recordsReceived: boolean;
  signedBy: string;
}

/** The paragraphs of the no-change letter. */
export const noChangeWording = {
  subject: (l: Pick<NoChangeLetter, 'taxYear'>) => `Review finished: no change to your ${l.taxYear} income-tax return`,
  opening: (l: NoChangeLetter) =>
    `We have finished reviewing your ${l.taxYear} income-tax return (reference ${l.returnRef}). We are making no change to it: the return stands as you filed it.`,
  ordinary:
    'We review a number of returns each year as part of the office’s ordinary work. A review does not mean that anything was wrong, and you do not need to do anything in answer to this letter.',
  thanks: (l: NoChangeLetter) => (l.recordsReceived ? 'Thank you for your help and for the records you sent.' : 'Thank you for your help.'),
  keep: 'Please keep your records for this year as usual.',
};

/** The no-change letter's plain text. */
export function noChangeText(l: NoChangeLetter): string[] {
  const w = noChangeWording;
  return [w.opening(l), '', w.ordinary, '', w.keep, '', help, '', w.thanks(l)];
}

/** Renders the no-change letter as a PDF. */
export function renderNoChangePdf(l: NoChangeLetter): Promise<Buffer> {
  const w = noChangeWording;
  return renderTaxpayerLetter(l, w.subject(l), (doc) => {
    doc.text(w.opening(l), { width: contentWidth(doc), lineGap: 1.5 });
    doc.moveDown(0.6);
    callout(doc, 'No change to your return', w.ordinary);
    letterClosing(doc, [w.keep, help, quoteReference(l.reference), w.thanks(l)], l.signedBy);
  });
}

// ---------------------------------------------------------------- adjustment proposal

/** The adjustment proposal. */
export interface AdjustmentProposalLetter extends TaxpayerLetterBase {
  figures: CorrectedReturn;
  /** Last day to answer (YYYY-MM-DD): PROPOSAL_ANSWER_DAYS after the letter's date. */
  answerBy: string;
  /** The office's wording of the taxpayer's rights and how to disagree (a setting). */
  rights: string;
  signedBy: string;
}

/** The paragraphs of the proposal. */
export const proposalWording = {
  subject: (l: Pick<AdjustmentProposalLetter, 'taxYear'>) => `Proposed change to your ${l.taxYear} income-tax return`,
  opening: (l: AdjustmentProposalLetter) =>
    `We have finished reviewing your ${l.taxYear} income-tax return (reference ${l.returnRef}). Having looked at the figures and any records you sent, we propose to change some of them. The tables below set the return as you filed it beside the return as we propose to correct it, and the difference.`,
  effect: (l: AdjustmentProposalLetter) => {
    const d = l.figures.taxDifference;
    const filed = money(l.figures.filed.tax);
    const corrected = money(l.figures.corrected.tax);
    if (d > 0) return `With these corrections the tax for the year would be ${corrected} instead of ${filed}: ${money(d)} more.`;
    return `With these corrections the tax for the year would be ${corrected} instead of ${filed}: ${money(-d)} less.`;
  },
  proposal: (l: AdjustmentProposalLetter) =>
    `Please answer by ${longDate(l.answerBy)}, ${PROPOSAL_ANSWER_DAYS} days from the date of this letter. If you agree, please tell us so. If you do not agree, please tell us which figures and why, and send any records that support your view.`,
  linesHeading: 'The lines we propose to correct',
  figuresHeading: 'What the corrections change',
  rulesNote: 'Totals, taxable income, tax and refund are worked out by the same rules for both columns.',
  thanks: 'Thank you for your help.',
};

/** The default wording of the taxpayer's rights: neutral, no threat and no promise the office has not made. */
export const DEFAULT_PROPOSAL_RIGHTS =
  'You have the right to disagree with this proposal. Nothing is final until we have considered your answer. If you write to us by the date above, we will look at what you send before we decide. If we do not hear from you by then, the office may make the change as proposed, and we will write to you again to say so. You can ask us at any time how to have a decision reviewed.';

function lineRows(l: AdjustmentProposalLetter): string[][] {
  return l.figures.lines.filter((x) => x.changed).map((x) => [`${x.label} (${x.code})`, money(x.filed), money(x.corrected), signedMoney(x.difference)]);
}

function figureRows(l: AdjustmentProposalLetter): string[][] {
  return l.figures.figures.map((f) => [f.label, money(f.filed), money(f.corrected), signedMoney(f.difference)]);
}

/** The proposal's plain text. */
export function proposalText(l: AdjustmentProposalLetter): string[] {
  const w = proposalWording;
  const row = (r: string[]) => `  ${r[0]}: as filed ${r[1]}, as corrected ${r[2]}, difference ${r[3]}`;
  return [
    w.opening(l),
    '',
    `${w.linesHeading}:`,
    ...lineRows(l).map(row),
    '',
    `${w.figuresHeading}:`,
    ...figureRows(l).map(row),
    w.rulesNote,
    '',
    w.effect(l),
    '',
    w.proposal(l),
    '',
    l.rights,
    '',
    help,
  ];
}

/** Renders the proposal as a PDF. */
export function renderAdjustmentProposalPdf(l: AdjustmentProposalLetter): Promise<Buffer> {
  const w = proposalWording;
  return renderTaxpayerLetter(l, w.subject(l), (doc) => {
    const width = contentWidth(doc);
    doc.text(w.opening(l), { width, lineGap: 1.5 });
    const cols = (first: string) => [
      { header: first, width: width - 3 * 95 },
      { header: 'As filed', width: 95, align: 'right' as const, figures: true },
      { header: 'As corrected', width: 95, align: 'right' as const, figures: true },
      { header: 'Difference', width: 95, align: 'right' as const, figures: true },
    ];
    heading(doc, w.linesHeading);
    table(doc, cols('Line'), lineRows(l));
    heading(doc, w.figuresHeading);
    table(doc, cols('Figure'), figureRows(l), { bold: (i) => l.figures.figures[i]?.key === 'tax' });
    doc.moveDown(0.3);
    doc.font(F.body).fontSize(9.5).text(w.rulesNote, { width });
    doc.moveDown(0.6);
    doc.font(F.bold).fontSize(10.5).text(w.effect(l), { width });
    doc.font(F.body);
    doc.moveDown(0.6);
    callout(doc, `This is a proposal: please answer by ${longDate(l.answerBy)}`, w.proposal(l));
    heading(doc, 'Your rights and how to disagree', 11.5);
    letterClosing(doc, [l.rights, help, quoteReference(l.reference), w.thanks], l.signedBy);
  });
}

// ---------------------------------------------------------------- mail

/**
 * The e-mail that carries a closing letter: the same words as the PDF (so a reader who never
 * opens the attachment knows what it says) and the letter attached. The caller adds `from`.
 */
export function closingLetterMail(
  l: Pick<TaxpayerLetterBase, 'reference' | 'taxpayerName'>,
  subject: string,
  body: string[],
  signedBy: string | null,
  to: string,
  pdf: Buffer,
  fileName: string,
): SendMailOptions {
  const text = [
    `Dear ${l.taxpayerName},`,
    '',
    ...body,
    '',
    `The letter is attached as a PDF (our reference ${l.reference}).`,
    '',
    'Yours sincerely,',
    ...(signedBy ? [signedBy] : []),
    `${OFFICE.unit}, ${OFFICE.name}`,
  ].join('\n');
  return { to, subject, text, replyTo: OFFICE.email, attachments: [{ filename: fileName, content: pdf, contentType: 'application/pdf' }] };
}
