/**
 * The e-mail that carries a document-request letter: the same plain words as the PDF (so a
 * reader who never opens the attachment still knows what is asked, by when and how), the
 * reply link, and the letter attached.
 */
import type { SendMailOptions } from 'nodemailer';
import { longDate, OFFICE } from '../../shared/letters';
import { letterWording, type DocumentRequestLetter } from './pdf/document-request-pdf';

const esc = (s: string) => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');

/** Builds the message for nodemailer (the caller adds `from`). */
export function documentRequestMail(l: DocumentRequestLetter, to: string, pdf: Buffer, fileName: string): SendMailOptions {
  const subject = letterWording.subject(l);
  const items = l.items.map((it, i) => `  ${i + 1}. ${it}`).join('\n');
  const text = [
    `Dear ${l.taxpayerName},`,
    '',
    letterWording.opening(l),
    '',
    letterWording.notADecision,
    '',
    'Please send us copies of:',
    items,
    '',
    `By ${longDate(l.dueDate)}, please upload them through your personal reply link:`,
    l.replyUrl,
    '',
    letterWording.howToSend,
    '',
    letterWording.missing,
    '',
    letterWording.help,
    '',
    `The letter is attached as a PDF (our reference ${l.reference}).`,
    '',
    'Yours sincerely,',
    l.signedBy,
    `${OFFICE.unit}, ${OFFICE.name}`,
  ].join('\n');
  const p = (s: string) => `<p style="margin:0 0 12px">${esc(s)}</p>`;
  const html = `<!doctype html><html lang="en"><body style="font-family:Arial,Helvetica,sans-serif;color:#1E3B3F;line-height:1.5;max-width:640px">
${p(`Dear ${l.taxpayerName},`)}
${p(letterWording.opening(l))}
<p style="margin:0 0 12px;padding:8px 12px;background:#F1E2C4;border-left:4px solid #B0791E"><strong>${esc(letterWording.notADecision)}</strong></p>
<p style="margin:0 0 4px"><strong>Please send us copies of:</strong></p>
<ol style="margin:0 0 12px">${l.items.map((it) => `<li>${esc(it)}</li>`).join('')}</ol>
<p style="margin:0 0 12px"><strong>By ${esc(longDate(l.dueDate))}</strong>, please upload them through your personal reply link:<br><a href="${esc(l.replyUrl)}">${esc(l.replyUrl)}</a></p>
${p(letterWording.howToSend)}
${p(letterWording.missing)}
${p(letterWording.help)}
${p(`The letter is attached as a PDF (our reference ${l.reference}).`)}
<p style="margin:0">Yours sincerely,<br>${esc(l.signedBy)}<br>${esc(`${OFFICE.unit}, ${OFFICE.name}`)}</p>
</body></html>`;
  return {
    to,
    subject,
    text,
    html,
    replyTo: OFFICE.email,
    attachments: [{ filename: fileName, content: pdf, contentType: 'application/pdf' }],
  };
}
