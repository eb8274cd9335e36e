/**
 * The digit-analysis working paper as a PDF (docs/methods.md#conformity-figures for the
 * figures): the source file's name and SHA-256, who ran it and when, the caution, each of the
 * four digit tests as a vector chart against its expected curve with its figures, and the
 * other digit figures. Written by `npm run digits -- --pdf FILE` and by a case's saved analysis.
 */
import {
  DIGIT_TEST_TITLES as TITLES,
  binLabel,
  fixedOrDash as fixed,
  goodnessWords,
  groupsByZ,
  largestDeviations,
  pValueText as pv,
  percentOrDash as pct,
  type DigitProfile,
  type DigitTestName,
  type GroupFigures,
} from '../../shared/digits';
import { CAUTIONS } from '../../shared/cautions';
import {
  BRASS,
  CORD,
  F,
  INK,
  INK_SOFT,
  LINE,
  callout,
  contentWidth,
  facts,
  footers,
  heading,
  keepTogether,
  newPdf,
  pdfBytes,
  printable,
  table,
  type Pdf,
} from '../letters/pdf/pdf-base';

/** The caution on every working paper: a departure selects figures for a look and proves nothing. */
export const WORKING_PAPER_CAUTION = `${CAUTIONS[0]} A departure from the expected digits selects figures for a closer look; it is not a finding.`;

/** What a working paper shows. */
export interface WorkingPaper {
  /** The case it belongs to, when saved to one (its reference). */
  caseRef: string | null;
  /** Where the amounts came from, in words (file name, reply, pool). */
  sourceLabel: string;
  /** The source file's name, or null for a pool of the office's data. */
  fileName: string | null;
  /** SHA-256 of the source file (hex), or null for a pool. */
  sha256: string | null;
  /** What was read ("column \"amount\" by \"account\""). */
  what: string;
  /** Who ran it (name and role). */
  ranBy: string;
  /** When. */
  ranAt: Date;
  /** The profile. */
  profile: DigitProfile;
  /** Groups of a split column. */
  split?: { column: string; groups: GroupFigures[] };
}

const int = (n: number) => n.toLocaleString('en-GB');
const stamp = (d: Date) => `${d.toISOString().slice(0, 10)} ${d.toISOString().slice(11, 16)} UTC`;

/** Bars of observed shares with the expected curve as a brass line, drawn as vectors. */
function chart(doc: Pdf, test: DigitTestName, counts: readonly number[], expected: readonly number[], n: number): void {
  const w = contentWidth(doc);
  const h = 120;
  keepTogether(doc, h + 30);
  const x0 = doc.page.margins.left + 30;
  const plotW = w - 34;
  const top = doc.y + 4;
  const observed = counts.map((c) => (n ? c / n : 0));
  const yMax = Math.max(0.02, Math.max(...observed, ...expected) * 1.15);
  const yAt = (p: number) => top + h - (p / yMax) * h;
  const slot = plotW / counts.length;
  doc.font(F.body).fontSize(7).fillColor(INK_SOFT);
  const step = yMax > 0.2 ? 0.1 : yMax > 0.05 ? 0.02 : 0.01;
  for (let p = 0; p <= yMax + 1e-9; p += step) {
    doc
      .save()
      .moveTo(x0, yAt(p))
      .lineTo(x0 + plotW, yAt(p))
      .lineWidth(0.4)
      .strokeColor(LINE)
      .stroke()
      .restore();
    doc.text(`${Math.round(p * 100)}%`, x0 - 28, yAt(p) - 3, { width: 24, align: 'right', lineBreak: false });
  }
  observed.forEach((o, i) => {
    const bh = (o / yMax) * h;
    doc
      .save()
      .rect(x0 + slot * i + slot * 0.15, top + h - bh, slot * 0.7, bh)
      .fill(CORD)
      .restore();
  });
  doc.save().lineWidth(1.4).strokeColor(BRASS);
  expected.forEach((e, i) => {
    const x = x0 + slot * i + slot / 2;
    if (i === 0) doc.moveTo(x, yAt(e));
    else doc.lineTo(x, yAt(e));
  });
  doc.stroke().restore();
  const every = counts.length > 20 ? 10 : 1;
  doc.font(F.body).fontSize(7).fillColor(INK);
  counts.forEach((_, i) => {
    if (i % every !== 0) return;
    doc.text(binLabel(test, i), x0 + slot * i - 6, top + h + 3, { width: slot + 12, align: 'center', lineBreak: false });
  });
  doc.x = doc.page.margins.left;
  doc.y = top + h + 16;
  doc.font(F.body).fontSize(8).fillColor(INK_SOFT).text('Bars: observed share. Brass line: expected share.', doc.page.margins.left, doc.y, { width: w });
}

function testSection(doc: Pdf, test: DigitTestName, p: DigitProfile): void {
  const r = p[test];
  const s = p.sizeAwareByTest[test];
  heading(doc, `${TITLES[test]} (n = ${int(r.n)})`, 11.5);
  if (r.n === 0) {
    doc
      .font(F.body)
      .fontSize(10)
      .fillColor(INK_SOFT)
      .text('No amounts take this test.', { width: contentWidth(doc) });
    return;
  }
  chart(doc, test, r.counts, r.expected, r.n);
  const conformity =
    r.conformity === 'too_few'
      ? `too few amounts for the published ranges; size-aware: MAD ${fixed(s.mad, 4)} against ${fixed(s.expectedMad, 4)} ± ${fixed(s.sdMad, 4)} expected for this n (z ${fixed(s.zScore, 2)}, ${s.verdict.replace('_', ' ')})`
      : `${r.conformity} (published conformity range)`;
  const top = largestDeviations(test, r)
    .map((d) => `${d.label}: ${pct(d.observed)} vs ${pct(d.expected)} (Z ${d.z.toFixed(2)})`)
    .join(' · ');
  facts(
    doc,
    [
      { label: 'MAD', value: `${fixed(r.mad, 5)}: ${conformity}` },
      { label: 'Chi-square', value: `${fixed(r.chiSquare, 2)}, df ${r.df}, p ${pv(r.pValue)}${r.chiSquareValid ? '' : ' (expected counts below 5)'}` },
      { label: 'KS / Kuiper', value: `${fixed(r.ks, 4)} (${goodnessWords(r.ksVerdict)}) / ${fixed(r.kuiper, 4)} (${goodnessWords(r.kuiperVerdict)})` },
      { label: 'Largest deviations', value: top },
    ],
    110,
  );
}

/**
 * Renders the working paper.
 *
 * @param wp what to show
 * @returns the PDF's bytes
 */
export async function renderWorkingPaperPdf(wp: WorkingPaper): Promise<Buffer> {
  const doc = newPdf({ title: `Digit analysis working paper${wp.caseRef ? ` ${wp.caseRef}` : ''}`, subject: wp.sourceLabel, author: wp.ranBy });
  const x = doc.page.margins.left;
  const w = contentWidth(doc);
  const p = wp.profile;
  doc.font(F.bold).fontSize(8.5).fillColor(BRASS).text('INTERNAL · WORKING PAPER', x, doc.y, { width: w, characterSpacing: 0.6 });
  doc.font(F.bold).fontSize(17).fillColor(INK).text('Digit analysis', { width: w });
  doc.moveDown(0.4);
  facts(
    doc,
    [
      ...(wp.caseRef ? [{ label: 'Case', value: wp.caseRef, figures: true }] : []),
      { label: 'Source', value: printable(wp.sourceLabel) },
      ...(wp.fileName ? [{ label: 'File name', value: printable(wp.fileName) }] : []),
      ...(wp.sha256 ? [{ label: 'File SHA-256', value: wp.sha256, figures: true }] : []),
      { label: 'Read', value: printable(wp.what) },
      { label: 'Amounts', value: `${int(p.count)} (${int(p.positives.count)} positive, ${int(p.negatives.count)} negative, ${int(p.excluded[0].count)} zero)` },
      { label: 'Run by', value: printable(wp.ranBy) },
      { label: 'Run at', value: stamp(wp.ranAt) },
    ],
    // narrow labels, so the 64-character SHA-256 fits on one line and reads back whole
    100,
  );
  doc.moveDown(0.4);
  callout(doc, 'Read this first', WORKING_PAPER_CAUTION);
  for (const t of ['firstDigit', 'secondDigit', 'firstTwo', 'lastTwo'] as const) testSection(doc, t, p);

  heading(doc, 'Other digit figures', 11.5);
  facts(
    doc,
    [
      {
        label: 'Summation',
        value: `largest shares of the total by first two digits (1.1 % each expected): ${
          p.summation.largest.map((g) => `${g.digits} ${pct(g.share)}`).join(' · ') || '—'
        }; MAD ${fixed(p.summation.mad, 5)}`,
      },
      { label: 'Repeated amounts', value: p.duplicates.length === 0 ? 'none' : p.duplicates.map((d) => `${d.amount} ×${d.count}`).join(' · ') },
      { label: 'Second order', value: `differences of sorted amounts, n = ${int(p.secondOrder.n)}: MAD ${fixed(p.secondOrder.mad, 5)}` },
      {
        label: 'Round amounts',
        value: `${int(p.roundShare.count)} of ${int(p.roundShare.n)} amounts of 1,000 or more end in 00 (${pct(p.roundShare.share)}; 1.0 % expected; P(at least this many) ${pv(p.roundShare.pValue)})`,
      },
      { label: 'Distortion factor', value: p.distortionFactor.value === null ? '—' : pct(p.distortionFactor.value) },
    ],
    110,
  );

  if (wp.split) {
    heading(doc, `By ${printable(wp.split.column)}`, 11.5);
    const groups = groupsByZ(wp.split.groups).slice(0, 60);
    doc
      .font(F.body)
      .fontSize(9)
      .fillColor(INK_SOFT)
      .text(
        `${int(wp.split.groups.length)} groups; ${groups.length < wp.split.groups.length ? 'the 60 with the highest size-aware z, ' : ''}first digit.`,
        x,
        doc.y,
        { width: w },
      );
    doc.moveDown(0.3);
    table(
      doc,
      [
        { header: wp.split.column, width: 150 },
        { header: 'Amounts', width: 60, align: 'right', figures: true },
        { header: 'MAD', width: 60, align: 'right', figures: true },
        { header: 'Size-aware z', width: 70, align: 'right', figures: true },
        { header: 'Verdict', width: 143 },
      ],
      groups.map((g) => [
        printable(g.name) || '(blank)',
        int(g.count),
        fixed(g.firstDigit.mad, 4),
        fixed(g.sizeAware.zScore, 2),
        g.sizeAware.verdict.replace('_', ' '),
      ]),
    );
  }
  footers(doc, `Digit analysis working paper${wp.caseRef ? ` · ${wp.caseRef}` : ''} · ${stamp(wp.ranAt)}`);
  return pdfBytes(doc);
}
