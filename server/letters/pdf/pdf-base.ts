/**
 * The common ground of Plumbline's PDFs: pdfkit with the fonts that ship with the product
 * (so the letter looks like the app and prints the same everywhere), the palette, and a few
 * layout helpers that keep blocks from being cut by a page break.
 */
import path from 'node:path';
import PDFDocument from 'pdfkit';
import { longDate, OFFICE } from '../../../shared/letters';

const FONT_DIR = path.resolve(__dirname, '..', '..', '..', 'fonts');

/** Font aliases registered on every document. */
export const F = { body: 'Body', bold: 'Bold', mono: 'Mono' } as const;

/** The app's palette (components/theme.ts), for print. */
export const INK = '#1E3B3F';
export const INK_SOFT = '#4A6366';
export const INK_FAINT = '#7D8E8F';
export const LINE = '#DCD5C6';
export const BRASS = '#B0791E';
export const BRASS_SOFT = '#F1E2C4';
export const CORD = '#2F5D62';
export const PAPER = '#F6F3EC';

/** A4 with 2 cm margins (the bottom one leaves room for the footer). */
export const MARGIN = { top: 56, left: 56, right: 56, bottom: 64 };

/** A pdfkit document. */
export type Pdf = PDFKit.PDFDocument;

/**
 * The face for a run of figures: IBM Plex Mono when the text has no white space, else the
 * body face. fontkit (pdfkit's font reader) cannot read the space glyph of the shipped
 * Plex Mono files and throws on any text with a space, so such text is set in Atkinson
 * Hyperlegible, whose figures are clear too.
 */
export function figureFace(text: string): string {
  return /\s/.test(text) ? F.body : F.mono;
}

/** A new A4 document with the shipped fonts registered and the body face selected. */
export function newPdf(info: { title: string; subject: string; author: string }): Pdf {
  const doc = new PDFDocument({
    size: 'A4',
    margins: MARGIN,
    bufferPages: true,
    info: { Title: info.title, Subject: info.subject, Author: info.author, Creator: 'Plumbline', Producer: 'Plumbline (pdfkit)' },
    lang: 'en-GB',
    displayTitle: true,
  });
  doc.registerFont(F.body, path.join(FONT_DIR, 'AtkinsonHyperlegible_400Regular.ttf'));
  doc.registerFont(F.bold, path.join(FONT_DIR, 'AtkinsonHyperlegible_700Bold.ttf'));
  doc.registerFont(F.mono, path.join(FONT_DIR, 'IBMPlexMono_400Regular.ttf'));
  doc.font(F.body).fontSize(10.5).fillColor(INK);
  return doc;
}

/**
 * Text typed by people, made safe to set: arrows (missing from Atkinson Hyperlegible) become
 * "->", control characters other than line breaks are dropped.
 */
export function printable(text: string): string {
  return text.replace(/[\u2190-\u21ff]/g, '->').replace(/[\u0000-\u0009\u000b-\u001f\u007f]/g, '');
}

/** Width between the margins. */
export function contentWidth(doc: Pdf): number {
  return doc.page.width - doc.page.margins.left - doc.page.margins.right;
}

/** Lowest y the body may reach on this page. */
export function bottomLimit(doc: Pdf): number {
  return doc.page.height - doc.page.margins.bottom;
}

/** Starts a new page when fewer than `height` points are left, so a block stays whole. */
export function keepTogether(doc: Pdf, height: number): void {
  if (doc.y + height > bottomLimit(doc)) doc.addPage();
}

/** A section heading in bold ink with a brass rule under it. */
export function heading(doc: Pdf, text: string, size = 12.5): void {
  keepTogether(doc, size * 4);
  doc.moveDown(0.6);
  doc
    .font(F.bold)
    .fontSize(size)
    .fillColor(INK)
    .text(text, doc.page.margins.left, doc.y, { width: contentWidth(doc) });
  const y = doc.y + 2;
  doc
    .save()
    .moveTo(doc.page.margins.left, y)
    .lineTo(doc.page.margins.left + 36, y)
    .lineWidth(1.5)
    .strokeColor(BRASS)
    .stroke()
    .restore();
  doc.y = y + 6;
  doc.font(F.body).fontSize(10.5).fillColor(INK);
}

/** A shaded box with a bold first line, for what must not be missed. */
export function callout(doc: Pdf, title: string, body: string, colours: { bg: string; bar: string } = { bg: BRASS_SOFT, bar: BRASS }): void {
  const x = doc.page.margins.left;
  const w = contentWidth(doc);
  const pad = 10;
  doc.font(F.bold).fontSize(10.5);
  const h1 = doc.heightOfString(title, { width: w - 2 * pad - 4 });
  doc.font(F.body).fontSize(10);
  const h2 = doc.heightOfString(body, { width: w - 2 * pad - 4 });
  const h = h1 + h2 + 2 * pad + 3;
  keepTogether(doc, h + 6);
  const top = doc.y;
  doc.save().rect(x, top, w, h).fill(colours.bg).rect(x, top, 4, h).fill(colours.bar).restore();
  doc
    .font(F.bold)
    .fontSize(10.5)
    .fillColor(INK)
    .text(title, x + pad + 4, top + pad, { width: w - 2 * pad - 4 });
  doc
    .font(F.body)
    .fontSize(10)
    .fillColor(INK)
    .text(body, x + pad + 4, doc.y + 3, { width: w - 2 * pad - 4 });
  doc.x = x;
  doc.y = top + h + 6;
  doc.fontSize(10.5);
}

/** Label–value pairs in two columns (labels soft, values in ink); values may be figures. */
export function facts(doc: Pdf, rows: readonly { label: string; value: string; figures?: boolean }[], labelWidth = 150): void {
  const x = doc.page.margins.left;
  const w = contentWidth(doc);
  for (const r of rows) {
    const face = r.figures ? figureFace(r.value) : F.body;
    const size = face === F.mono ? 9.5 : 10.5;
    doc.font(face).fontSize(size);
    const hv = doc.heightOfString(r.value, { width: w - labelWidth });
    doc.font(F.body).fontSize(10);
    const hl = doc.heightOfString(r.label, { width: labelWidth - 8 });
    const h = Math.max(hv, hl) + 4;
    keepTogether(doc, h);
    const y = doc.y;
    doc
      .font(F.body)
      .fontSize(10)
      .fillColor(INK_SOFT)
      .text(r.label, x, y, { width: labelWidth - 8 });
    doc
      .font(face)
      .fontSize(size)
      .fillColor(INK)
      .text(r.value, x + labelWidth, y, { width: w - labelWidth });
    doc.y = y + h;
  }
  doc.x = x;
  doc.font(F.body).fontSize(10.5).fillColor(INK);
}

/** One table column. */
export interface Column {
  header: string;
  width: number;
  align?: 'left' | 'right';
  figures?: boolean;
}

/** A table with a repeated header row, drawn row by row so long evidence wraps and pages break cleanly. */
export function table(doc: Pdf, columns: readonly Column[], rows: readonly string[][], opts: { bold?: (rowIndex: number) => boolean } = {}): void {
  const x0 = doc.page.margins.left;
  const pad = 4;
  const drawHeader = () => {
    const y = doc.y;
    doc.font(F.bold).fontSize(9).fillColor(INK_SOFT);
    let x = x0;
    const h = Math.max(...columns.map((c) => doc.heightOfString(c.header, { width: c.width - 2 * pad }))) + 2 * pad;
    doc
      .save()
      .rect(
        x0,
        y,
        columns.reduce((s, c) => s + c.width, 0),
        h,
      )
      .fill(PAPER)
      .restore();
    for (const c of columns) {
      doc.fillColor(INK_SOFT).text(c.header, x + pad, y + pad, { width: c.width - 2 * pad, align: c.align ?? 'left' });
      x += c.width;
    }
    doc.y = y + h;
  };
  keepTogether(doc, 60);
  drawHeader();
  rows.forEach((row, ri) => {
    const bold = opts.bold?.(ri) ?? false;
    const fontOf = (c: Column, text: string) => (c.figures ? figureFace(text) : bold ? F.bold : F.body);
    const sizeOf = (c: Column, text: string) => (fontOf(c, text) === F.mono ? 8.8 : 9.5);
    const h =
      Math.max(
        ...columns.map((c, i) => {
          const t = row[i] ?? '';
          doc.font(fontOf(c, t)).fontSize(sizeOf(c, t));
          return doc.heightOfString(t, { width: c.width - 2 * pad });
        }),
      ) +
      2 * pad;
    if (doc.y + h > bottomLimit(doc)) {
      doc.addPage();
      drawHeader();
    }
    const y = doc.y;
    let x = x0;
    columns.forEach((c, i) => {
      const t = row[i] ?? '';
      doc
        .font(fontOf(c, t))
        .fontSize(sizeOf(c, t))
        .fillColor(INK)
        .text(t, x + pad, y + pad, { width: c.width - 2 * pad, align: c.align ?? 'left' });
      x += c.width;
    });
    doc
      .save()
      .moveTo(x0, y + h)
      .lineTo(x, y + h)
      .lineWidth(0.6)
      .strokeColor(LINE)
      .stroke()
      .restore();
    doc.y = y + h;
  });
  doc.x = x0;
  doc.font(F.body).fontSize(10.5).fillColor(INK);
}

/**
 * Writes the footer (office line and "page n of m") on every buffered page. The bottom
 * margin is lifted while writing, or pdfkit would start a new page for text below it.
 */
export function footers(doc: Pdf, left: string): void {
  const range = doc.bufferedPageRange();
  for (let i = range.start; i < range.start + range.count; i++) {
    doc.switchToPage(i);
    const bottom = doc.page.margins.bottom;
    doc.page.margins.bottom = 0;
    const y = doc.page.height - 40;
    const x = doc.page.margins.left;
    const w = contentWidth(doc);
    doc
      .save()
      .moveTo(x, y - 6)
      .lineTo(x + w, y - 6)
      .lineWidth(0.5)
      .strokeColor(LINE)
      .stroke()
      .restore();
    doc.font(F.body).fontSize(8).fillColor(INK_FAINT);
    doc.text(left, x, y, { width: w - 80, lineBreak: false });
    doc.text(`Page ${i - range.start + 1} of ${range.count}`, x + w - 80, y, { width: 80, align: 'right', lineBreak: false });
    doc.page.margins.bottom = bottom;
  }
}

/** The office's letterhead: name, section and contact lines at the top of the first page. */
export function letterhead(doc: Pdf, right: string[] = []): void {
  const x = doc.page.margins.left;
  const w = contentWidth(doc);
  const top = doc.page.margins.top;
  // The plumb mark of the app: a bar, a cord and a brass bob.
  doc.save();
  doc
    .moveTo(x, top + 2)
    .lineTo(x + 18, top + 2)
    .lineWidth(2)
    .strokeColor(INK)
    .stroke();
  doc
    .moveTo(x + 9, top + 2)
    .lineTo(x + 9, top + 14)
    .lineWidth(1.2)
    .strokeColor(INK)
    .stroke();
  doc.polygon([x + 9, top + 15], [x + 14, top + 19], [x + 9, top + 25], [x + 4, top + 19]).fill(BRASS);
  doc.restore();
  doc
    .font(F.bold)
    .fontSize(14)
    .fillColor(INK)
    .text(OFFICE.name, x + 28, top, { width: w / 2 });
  doc
    .font(F.body)
    .fontSize(9.5)
    .fillColor(INK_SOFT)
    .text(OFFICE.unit, x + 28, doc.y, { width: w / 2 });
  const contact = [...OFFICE.address, OFFICE.phone, OFFICE.email, ...right];
  doc
    .font(F.body)
    .fontSize(9)
    .fillColor(INK_SOFT)
    .text(contact.join('\n'), x + w / 2, top, { width: w / 2, align: 'right' });
  doc.x = x;
  doc.y = Math.max(doc.y, top + 14 * 4) + 14;
  doc
    .save()
    .moveTo(x, doc.y)
    .lineTo(x + w, doc.y)
    .lineWidth(0.8)
    .strokeColor(LINE)
    .stroke()
    .restore();
  doc.y += 16;
  doc.font(F.body).fontSize(10.5).fillColor(INK);
}

/** What every letter to a taxpayer knows about its case. */
export interface TaxpayerLetterBase {
  /** Our reference, e.g. "DR-3F2A9C1B", quoted back by the taxpayer. */
  reference: string;
  /** Date of the letter (YYYY-MM-DD). */
  date: string;
  taxpayerName: string;
  postalAddress: string | null;
  taxYear: number;
  returnRef: string;
}

/** What the top of a letter to a taxpayer says. */
export interface LetterHead {
  taxpayerName: string;
  postalAddress: string | null;
  /** Date of the letter (YYYY-MM-DD). */
  date: string;
  subject: string;
  returnRef: string;
}

/** The line that asks the taxpayer to quote our reference. */
export const quoteReference = (reference: string) => `Please quote our reference ${reference} in any message.`;

/**
 * A letter to a taxpayer as a PDF: the frame every such letter shares (document info,
 * letterhead with our reference, address, date, subject and "Dear …", the footers), with
 * `body` writing what lies between.
 */
export function renderTaxpayerLetter(l: TaxpayerLetterBase, subject: string, body: (doc: Pdf) => void): Promise<Buffer> {
  const doc = newPdf({ title: subject, subject: `Reference ${l.reference}`, author: OFFICE.name });
  letterhead(doc, [`Our reference: ${l.reference}`]);
  letterOpening(doc, { ...l, subject });
  body(doc);
  footers(doc, `${OFFICE.name} · ${OFFICE.phone} · Reference ${l.reference}`);
  return pdfBytes(doc);
}

/**
 * The top of a letter to a taxpayer, below the letterhead: address block beside the date,
 * the subject, the return reference and "Dear …". Every taxpayer letter opens this way.
 */
export function letterOpening(doc: Pdf, l: LetterHead): void {
  const x = doc.page.margins.left;
  const w = contentWidth(doc);
  const address = [l.taxpayerName, ...(l.postalAddress ? l.postalAddress.split(/\s*[,\n]\s*/).filter(Boolean) : [])];
  const top = doc.y;
  doc
    .font(F.body)
    .fontSize(10.5)
    .fillColor(INK)
    .text(address.join('\n'), x, top, { width: w * 0.6 });
  const afterAddress = doc.y;
  doc.text(longDate(l.date), x + w * 0.6, top, { width: w * 0.4, align: 'right' });
  doc.y = Math.max(afterAddress, doc.y) + 18;
  doc.x = x;
  doc.font(F.bold).fontSize(13).fillColor(INK).text(l.subject, x, doc.y, { width: w });
  doc.font(F.body).fontSize(9.5).fillColor(INK_SOFT).text(`Return reference ${l.returnRef}`, { width: w });
  doc.moveDown(0.8);
  doc.font(F.body).fontSize(10.5).fillColor(INK).text(`Dear ${l.taxpayerName},`, { width: w });
  doc.moveDown(0.6);
}

/** The records asked for, numbered in brass; each item kept whole on a page. */
export function numberedItems(doc: Pdf, items: readonly string[]): void {
  const x = doc.page.margins.left;
  const w = contentWidth(doc);
  items.map(printable).forEach((item, i) => {
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
}

/** The due date, how to reply and the personal link, in one shaded block so none is missed. */
export function replyLinkBox(doc: Pdf, dueDate: string, how: string, replyUrl: string): void {
  const x = doc.page.margins.left;
  const w = contentWidth(doc);
  const dueLine = `By ${longDate(dueDate)}`;
  doc.font(F.bold).fontSize(12);
  const hDue = doc.heightOfString(dueLine, { width: w - 24 });
  doc.font(F.body).fontSize(10);
  const hHow = doc.heightOfString(how, { width: w - 24 });
  const urlFace = figureFace(replyUrl);
  doc.font(urlFace).fontSize(9);
  const hUrl = doc.heightOfString(replyUrl, { width: w - 24 });
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
    .text(how, x + 16, doc.y + 4, { width: w - 24, lineGap: 1 });
  doc
    .font(F.bold)
    .fontSize(9.5)
    .text('Your reply link:', x + 16, doc.y + 6, { width: w - 24 });
  doc
    .font(urlFace)
    .fontSize(9)
    .fillColor(INK)
    .text(replyUrl, x + 16, doc.y + 1, { width: w - 24 });
  doc.x = x;
  doc.y = by + boxH + 12;
}

/**
 * The end of a letter to a taxpayer: the closing paragraphs (each kept whole on a page),
 * "Yours sincerely," and the signature: the examiner's name when one signs, then the unit.
 */
export function letterClosing(doc: Pdf, paragraphs: readonly string[], signedBy?: string): void {
  const x = doc.page.margins.left;
  const w = contentWidth(doc);
  doc.font(F.body).fontSize(10.5).fillColor(INK);
  for (const p of paragraphs) {
    keepTogether(doc, doc.heightOfString(p, { width: w }) + 8);
    doc.text(p, x, doc.y, { width: w, lineGap: 1.5 });
    doc.moveDown(0.5);
  }
  doc.moveDown(0.5);
  keepTogether(doc, 60);
  doc.text('Yours sincerely,', x, doc.y, { width: w });
  if (signedBy) {
    doc.moveDown(1.2);
    doc.font(F.bold).text(signedBy, { width: w });
    doc.font(F.body).fillColor(INK_SOFT).text(`${OFFICE.unit}, ${OFFICE.name}`, { width: w });
  } else {
    doc.moveDown(0.8);
    doc.font(F.bold).text(`${OFFICE.unit}, ${OFFICE.name}`, { width: w });
  }
}

/** Finishes the document and resolves with its bytes. */
export function pdfBytes(doc: Pdf): Promise<Buffer> {
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = [];
    doc.on('data', (c: Buffer) => chunks.push(c));
    doc.on('end', () => resolve(Buffer.concat(chunks)));
    doc.on('error', reject);
    doc.end();
  });
}
