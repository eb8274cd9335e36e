/**
 * The referral memo (docs/design.md#letters-and-replies): an internal PDF that hands a case to a
 * specialist unit with the evidence: case facts (TIN masked), the score with every
 * component's points and evidence, the first-digit chart against Benford's expected
 * proportions drawn as vector graphics, the examiner's notes and the case history. The
 * screening caution stands at the top, because a memo travels further than the case screen.
 */
import { SCREENING_CAUTION } from '../../../shared/cautions';
import { FIRST_DIGIT_EXPECTED } from '../../../shared/digits';
import { longDate, OFFICE } from '../../../shared/letters';
import type { ScoreBreakdown } from '../../../shared/scoring/breakdown';
import { money } from '../../../shared/scoring/format';
import {
  BRASS,
  callout,
  contentWidth,
  CORD,
  F,
  facts,
  footers,
  heading,
  INK,
  INK_FAINT,
  INK_SOFT,
  keepTogether,
  LINE,
  newPdf,
  pdfBytes,
  printable,
  table,
} from './pdf-base';

/** A note or an event in the memo. */
export interface MemoEntry {
  at: Date;
  who: string | null;
  text: string;
}

/** Everything the memo shows. */
export interface ReferralMemo {
  reference: string;
  /** YYYY-MM-DD */
  date: string;
  unitLabel: string;
  summary: string;
  author: string;
  facts: {
    returnRef: string;
    taxYear: number;
    taxpayerName: string;
    maskedTin: string;
    activity: string;
    preparer: string | null;
    batch: string;
    caseState: string;
    openedAt: Date;
    assignee: string | null;
    riskScore: string;
    profileVersion: number;
    amountAtStakeCents: number;
    priority: string;
  };
  breakdown: ScoreBreakdown | null;
  notes: MemoEntry[];
  events: MemoEntry[];
}

const VERDICT_WORDS: Record<ScoreBreakdown['digits']['verdict'], string> = {
  within_expected: 'within what chance gives for this many amounts',
  elevated: 'elevated for this many amounts',
  high: 'high for this many amounts',
  too_few: 'too few amounts for a verdict',
};

const stamp = (d: Date) => `${longDate(d.toISOString().slice(0, 10))} ${d.toISOString().slice(11, 16)} UTC`;
const fmt = (x: number | null, digits = 3) => (x === null ? '—' : x.toFixed(digits));

/**
 * Draws observed first-digit proportions as bars and Benford's expected proportions as a
 * line with points, with axes, a light grid and a legend.
 */
export function digitChart(doc: PDFKit.PDFDocument, counts: readonly number[], title: string, caption: string): void {
  const n = counts.reduce((s, c) => s + c, 0);
  const observed = counts.map((c) => (n ? c / n : 0));
  const expected = Array.from(FIRST_DIGIT_EXPECTED);
  const w = contentWidth(doc);
  const chartH = 170;
  const total = chartH + 90;
  keepTogether(doc, total);
  const x0 = doc.page.margins.left;
  doc.font(F.bold).fontSize(10).fillColor(INK).text(title, x0, doc.y, { width: w });
  // Legend above the plot, so the plot can use the full width.
  const ly = doc.y + 4;
  doc
    .save()
    .rect(x0 + 34, ly + 1, 10, 8)
    .fill(CORD)
    .restore();
  doc
    .font(F.body)
    .fontSize(8.5)
    .fillColor(INK)
    .text(`Observed (n = ${n})`, x0 + 48, ly, { lineBreak: false });
  const lx = x0 + 48 + doc.widthOfString(`Observed (n = ${n})`) + 18;
  doc
    .save()
    .moveTo(lx, ly + 5)
    .lineTo(lx + 14, ly + 5)
    .lineWidth(1.6)
    .strokeColor(BRASS)
    .stroke()
    .circle(lx + 7, ly + 5, 2.4)
    .fill(BRASS)
    .restore();
  doc
    .font(F.body)
    .fontSize(8.5)
    .fillColor(INK)
    .text('Expected (Benford)', lx + 18, ly, { lineBreak: false });
  const top = ly + 18;
  const left = x0 + 34;
  const plotW = w - 40;
  const plotH = chartH - 24;
  const yMax = Math.max(0.35, Math.ceil(Math.max(...observed, ...expected) * 10 + 0.5) / 10);
  const yAt = (p: number) => top + plotH - (p / yMax) * plotH;
  const slot = plotW / 9;

  // Grid and y axis labels every 10 percentage points.
  doc.font(F.mono).fontSize(7.5);
  for (let p = 0; p <= yMax + 1e-9; p += 0.1) {
    const y = yAt(p);
    doc
      .save()
      .moveTo(left, y)
      .lineTo(left + plotW, y)
      .lineWidth(0.4)
      .strokeColor(LINE)
      .stroke()
      .restore();
    doc.fillColor(INK_FAINT).text(`${Math.round(p * 100)}%`, x0, y - 4, { width: 30, align: 'right', lineBreak: false });
  }
  // Bars: observed proportions.
  observed.forEach((p, i) => {
    const bx = left + i * slot + slot * 0.2;
    const bw = slot * 0.6;
    const h = (p / yMax) * plotH;
    if (h > 0)
      doc
        .save()
        .rect(bx, top + plotH - h, bw, h)
        .fill(CORD)
        .restore();
    doc
      .font(F.mono)
      .fontSize(8)
      .fillColor(INK)
      .text(String(i + 1), left + i * slot, top + plotH + 4, { width: slot, align: 'center', lineBreak: false });
  });
  // Expected curve.
  doc.save();
  expected.forEach((p, i) => {
    const cx = left + i * slot + slot / 2;
    if (i === 0) doc.moveTo(cx, yAt(p));
    else doc.lineTo(cx, yAt(p));
  });
  doc.lineWidth(1.6).strokeColor(BRASS).stroke();
  expected.forEach((p, i) => doc.circle(left + i * slot + slot / 2, yAt(p), 2.4).fill(BRASS));
  doc.restore();
  // Axis line.
  doc
    .save()
    .moveTo(left, top + plotH)
    .lineTo(left + plotW, top + plotH)
    .lineWidth(0.8)
    .strokeColor(INK_SOFT)
    .stroke()
    .restore();
  doc
    .font(F.body)
    .fontSize(8)
    .fillColor(INK_SOFT)
    .text('First digit', left, top + plotH + 15, { width: plotW, align: 'center', lineBreak: false });

  doc
    .font(F.body)
    .fontSize(8.5)
    .fillColor(INK_SOFT)
    .text(caption, x0, top + chartH + 6, { width: w });
  doc.x = x0;
  doc.y = Math.max(doc.y, top + chartH + 6) + 10;
  doc.font(F.body).fontSize(10.5).fillColor(INK);
}

function entries(doc: PDFKit.PDFDocument, list: readonly MemoEntry[], empty: string): void {
  const x = doc.page.margins.left;
  const w = contentWidth(doc);
  if (!list.length) {
    doc.font(F.body).fontSize(10).fillColor(INK_SOFT).text(empty, x, doc.y, { width: w });
    return;
  }
  for (const e of list) {
    const head = `${stamp(e.at)}${e.who ? ` · ${e.who}` : ''}`;
    const text = printable(e.text);
    doc.font(F.body).fontSize(10);
    const h = doc.heightOfString(text, { width: w - 12 }) + 18;
    keepTogether(doc, Math.min(h, 120));
    doc.font(F.bold).fontSize(8.5).fillColor(INK_SOFT).text(head, x, doc.y, { width: w });
    doc
      .font(F.body)
      .fontSize(10)
      .fillColor(INK)
      .text(text, x + 12, doc.y + 1, { width: w - 12, lineGap: 1 });
    doc.moveDown(0.45);
  }
  doc.x = x;
}

/** Renders the memo as a PDF. */
export async function renderReferralMemoPdf(m: ReferralMemo): Promise<Buffer> {
  const doc = newPdf({
    title: `Referral memo ${m.reference}: ${m.facts.returnRef}`,
    subject: `Referral to the ${m.unitLabel}`,
    author: `${m.author}, ${OFFICE.unit}`,
  });
  const x = doc.page.margins.left;
  const w = contentWidth(doc);

  // Title block: internal, who, to whom, when.
  doc.font(F.bold).fontSize(8.5).fillColor(BRASS).text('INTERNAL · CONFIDENTIAL TAXPAYER INFORMATION', x, doc.y, { width: w, characterSpacing: 0.6 });
  doc.font(F.bold).fontSize(17).fillColor(INK).text('Referral memo', { width: w });
  doc.font(F.body).fontSize(10).fillColor(INK_SOFT).text(`${OFFICE.name} · ${OFFICE.unit}`, { width: w });
  doc.moveDown(0.6);
  facts(doc, [
    { label: 'To', value: m.unitLabel },
    { label: 'From', value: `${m.author}, ${OFFICE.unit}` },
    { label: 'Date', value: longDate(m.date) },
    { label: 'Reference', value: m.reference, figures: true },
    { label: 'Return', value: `${m.facts.returnRef}, tax year ${m.facts.taxYear}`, figures: false },
  ]);
  doc.moveDown(0.5);

  callout(doc, 'Read this first', `${SCREENING_CAUTION} The figures below explain why the return was selected for a closer look; they are not findings.`);

  heading(doc, 'Why the case is referred');
  doc.font(F.body).fontSize(10.5).fillColor(INK).text(printable(m.summary), x, doc.y, { width: w, lineGap: 1.5 });

  heading(doc, 'Case facts');
  const f = m.facts;
  facts(doc, [
    { label: 'Taxpayer', value: f.taxpayerName },
    { label: 'TIN', value: f.maskedTin, figures: true },
    { label: 'Activity', value: f.activity },
    { label: 'Preparer', value: f.preparer ?? 'Self-prepared' },
    { label: 'Return reference', value: f.returnRef, figures: true },
    { label: 'Tax year', value: String(f.taxYear), figures: true },
    { label: 'Filing batch', value: f.batch },
    { label: 'Case opened', value: stamp(f.openedAt) },
    { label: 'Case state before referral', value: f.caseState },
    { label: 'Examiner', value: f.assignee ?? 'Not assigned' },
    { label: 'Risk score', value: `${f.riskScore} of 100 (scoring profile version ${f.profileVersion})`, figures: true },
    { label: 'Amount at stake (estimate)', value: money(f.amountAtStakeCents), figures: true },
    { label: 'Priority', value: f.priority, figures: true },
  ]);

  const b = m.breakdown;
  if (b) {
    heading(doc, "Return totals (as recomputed by the office's rules)");
    facts(
      doc,
      [
        { label: 'Total income', value: money(b.totals.incomeCents), figures: true },
        { label: 'Total deductions', value: money(b.totals.deductionsCents), figures: true },
        { label: 'Taxable income', value: money(b.totals.taxableCents), figures: true },
        { label: 'Tax', value: money(b.totals.taxCents), figures: true },
        { label: 'Tax withheld', value: money(b.totals.withheldCents), figures: true },
        { label: 'Refund', value: money(b.totals.refundCents), figures: true },
      ],
      180,
    );
    doc
      .font(F.body)
      .fontSize(9)
      .fillColor(INK_SOFT)
      .text(`Amount at stake basis: ${b.stakeBasis}`, x, doc.y + 2, { width: w });

    heading(doc, 'Score breakdown');
    doc
      .font(F.body)
      .fontSize(9.5)
      .fillColor(INK_SOFT)
      .text(
        `Each component gives a strength from 0 to 1; its points are the profile's weight times that strength. The score is the blend of the points on a 0–100 scale; returns at or above ${b.selectionCut} were selected.`,
        x,
        doc.y,
        { width: w },
      );
    doc.moveDown(0.4);
    const comps = [...b.components].sort((p, q) => q.points - p.points);
    table(
      doc,
      [
        { header: 'Component', width: 130 },
        { header: 'Weight', width: 44, align: 'right', figures: true },
        { header: 'Strength', width: 50, align: 'right', figures: true },
        { header: 'Points', width: 46, align: 'right', figures: true },
        { header: 'Evidence', width: w - 270 },
      ],
      [
        ...comps.map((c) => [c.label, c.weight.toFixed(0), c.strength.toFixed(2), c.points.toFixed(1), c.evidence]),
        ['Risk score', '', '', b.riskScore.toFixed(1), 'Blend of the points above (0–100).'],
      ],
      { bold: (i) => i === comps.length },
    );

    heading(doc, "First digits of the return's amounts");
    const d = b.digits;
    digitChart(
      doc,
      d.firstDigitCounts,
      `This return: ${d.n} amounts`,
      `Bars: share of the return's amounts with each first digit. Line: Benford's expected share, log10(1 + 1/d). ` +
        `MAD ${fmt(d.mad)} against ${fmt(d.expectedMad)} expected by chance for n = ${d.n} (size-aware z ${fmt(d.zScore, 2)}): ${VERDICT_WORDS[d.verdict]}. ` +
        `A single return has few amounts; typical figures can deviate and invented ones can conform.`,
    );
    const pool = b.preparerPool;
    if (pool?.firstDigitCounts) {
      digitChart(
        doc,
        pool.firstDigitCounts,
        `The preparer's returns, pooled: ${pool.n} amounts`,
        `MAD ${fmt(pool.mad)}; conformity ${pool.conformity.replace('_', ' ')}, judged by ${pool.judgedBy === 'fixed' ? 'the fixed thresholds (Nigrini 2012)' : pool.judgedBy === 'size-aware' ? 'the size-aware figure' : 'no test'}.`,
      );
    }
  } else {
    heading(doc, 'Score breakdown');
    doc.font(F.body).fontSize(10).fillColor(INK_SOFT).text('The score that opened this case has no stored breakdown.', x, doc.y, { width: w });
  }

  heading(doc, "Examiner's notes");
  entries(doc, m.notes, 'No notes were written on this case.');

  heading(doc, 'Case history');
  entries(doc, m.events, 'No events recorded.');

  doc.moveDown(0.8);
  keepTogether(doc, 50);
  doc.save().rect(x, doc.y, w, 0.6).fill(LINE).restore();
  doc.moveDown(0.5);
  doc
    .font(F.body)
    .fontSize(9)
    .fillColor(INK_SOFT)
    .text(
      "Handle under the office's confidentiality rules. The office's own law, procedure and licensed professional practice come first; this memo records why the case was selected and what the examiner found, and decides nothing.",
      x,
      doc.y,
      { width: w },
    );

  footers(doc, `Referral memo ${m.reference} · ${m.facts.returnRef} · Internal`);
  return pdfBytes(doc);
}

/**
 * The memo's content as plain text, for the preview an examiner reads before referring
 * (issue 14): the same facts, components and entries the PDF sets out, without the charts.
 */
export function referralMemoText(m: ReferralMemo): string {
  const f = m.facts;
  const lines = [
    `Referral memo ${m.reference}, ${longDate(m.date)}, from ${m.author}`,
    `For the ${m.unitLabel}`,
    '',
    SCREENING_CAUTION,
    '',
    `Summary: ${m.summary}`,
    '',
    `Taxpayer: ${f.taxpayerName} (TIN ${f.maskedTin}), ${f.activity}${f.preparer ? `, preparer ${f.preparer}` : ''}`,
    `Return ${f.returnRef}, tax year ${f.taxYear}, ${f.batch}`,
    `Case opened ${stamp(f.openedAt)}; ${f.caseState.toLowerCase()}; examiner ${f.assignee ?? 'not assigned'}`,
    `Risk score ${f.riskScore} of 100 (profile version ${f.profileVersion}); amount at stake ${money(f.amountAtStakeCents)}; priority ${f.priority}`,
  ];
  if (m.breakdown) {
    lines.push('', 'Score breakdown (points, evidence):');
    for (const c of [...m.breakdown.components].sort((p, q) => q.points - p.points)) lines.push(`- ${c.label}: ${c.points.toFixed(1)}. ${c.evidence}`);
    lines.push(`The PDF also charts the return's first digits against Benford's expected shares.`);
  }
  lines.push('', `Examiner's notes: ${m.notes.length || 'none'}`);
  for (const n of m.notes) lines.push(`- ${stamp(n.at)}${n.who ? `, ${n.who}` : ''}: ${n.text}`);
  lines.push('', `Case history: ${m.events.length} entries`);
  for (const e of m.events) lines.push(`- ${stamp(e.at)}${e.who ? `, ${e.who}` : ''}: ${e.text}`);
  return lines.join('\n');
}
