/**
 * The digit-analysis working paper as an XLSX workbook (docs/methods.md#conformity-figures for
 * the figures): a cover sheet with the source (file name and SHA-256, or the pool in words),
 * who ran it and when and the caution, then one sheet per test with its counts beside the
 * expected shares, and sheets for the summation, second-order, repeated-amount and split
 * figures. Every text that came from outside (file names, columns, group names, names of
 * people) goes through safeCellText, so no cell can start a formula; figures are numbers.
 */
import ExcelJS from 'exceljs';
import { DIGIT_TEST_TITLES, binLabel, goodnessWords, type DigitResultJson, type DigitTestName } from '../../shared/digits';
import { safeCellText } from '../../shared/spreadsheet-text';
import { WORKING_PAPER_CAUTION, type WorkingPaper } from './working-paper-pdf';

/** The tests with a sheet each, in the order the PDF shows them. */
const TESTS: readonly DigitTestName[] = ['firstDigit', 'secondDigit', 'firstTwo', 'lastTwo'];

const stamp = (d: Date) => `${d.toISOString().slice(0, 10)} ${d.toISOString().slice(11, 16)} UTC`;

/** A bold header row and sensible widths. */
function header(ws: ExcelJS.Worksheet, columns: { header: string; width: number }[]): void {
  ws.columns = columns.map((c) => ({ header: c.header, width: c.width }));
  ws.getRow(1).font = { bold: true };
  ws.views = [{ state: 'frozen', ySplit: 1 }];
}

function testSheet(wb: ExcelJS.Workbook, test: DigitTestName, r: DigitResultJson): void {
  const t = r[test];
  const s = r.sizeAwareByTest[test];
  const ws = wb.addWorksheet(DIGIT_TEST_TITLES[test]);
  header(ws, [
    { header: 'Digits', width: 10 },
    { header: 'Count', width: 12 },
    { header: 'Observed share', width: 16 },
    { header: 'Expected share', width: 16 },
    { header: 'Z', width: 10 },
    { header: '', width: 4 },
    { header: 'Figure', width: 22 },
    { header: 'Value', width: 60 },
  ]);
  t.counts.forEach((count, i) => {
    ws.getCell(i + 2, 1).value = binLabel(test, i);
    ws.getCell(i + 2, 2).value = count;
    ws.getCell(i + 2, 3).value = t.n ? count / t.n : null;
    ws.getCell(i + 2, 4).value = t.expected[i];
    ws.getCell(i + 2, 5).value = t.z[i];
    ws.getCell(i + 2, 3).numFmt = '0.00%';
    ws.getCell(i + 2, 4).numFmt = '0.00%';
    ws.getCell(i + 2, 5).numFmt = '0.00';
  });
  const figures: [string, string | number | null][] = [
    ['Amounts tested (n)', t.n],
    ['MAD', t.mad],
    ['Conformity (published range)', t.conformity.replace('_', ' ')],
    ['Size-aware expected MAD', s.expectedMad],
    ['Size-aware z', s.zScore],
    ['Size-aware verdict', s.verdict.replace('_', ' ')],
    ['Chi-square', t.chiSquare],
    ['Degrees of freedom', t.df],
    ['p-value', t.pValue],
    ['Chi-square valid', t.chiSquareValid ? 'yes' : 'no (expected counts below 5)'],
    ['KS', t.ks],
    ['KS verdict', t.ksVerdict ? goodnessWords(t.ksVerdict) : null],
    ['Kuiper', t.kuiper],
    ['Kuiper verdict', t.kuiperVerdict ? goodnessWords(t.kuiperVerdict) : null],
  ];
  figures.forEach(([label, value], i) => {
    ws.getCell(i + 2, 7).value = label;
    ws.getCell(i + 2, 8).value = value;
  });
}

/**
 * Renders the working paper as XLSX.
 *
 * @param wp what to show (as for the PDF)
 * @param result the stored result JSON (its `split` adds a sheet)
 * @returns the workbook's bytes
 */
export async function renderWorkingPaperXlsx(wp: WorkingPaper, result: DigitResultJson): Promise<Buffer> {
  const wb = new ExcelJS.Workbook();
  wb.creator = 'Plumbline';
  wb.created = wp.ranAt;
  const cover = wb.addWorksheet('Working paper');
  cover.columns = [{ width: 24 }, { width: 100 }];
  const rows: [string, string | number][] = [
    ['Digit analysis', 'INTERNAL · WORKING PAPER'],
    ...(wp.caseRef ? [['Case', safeCellText(wp.caseRef)] as [string, string]] : []),
    // A file is named with its hash; a pool of the returns on file by its description.
    [wp.fileName ? 'Source' : 'Pool', safeCellText(wp.sourceLabel)],
    ...(wp.fileName ? [['File name', safeCellText(wp.fileName)] as [string, string]] : []),
    ...(wp.sha256 ? [['File SHA-256', wp.sha256] as [string, string]] : []),
    ['Read', safeCellText(wp.what)],
    ['Amounts', result.count],
    ['Positive amounts', result.positives.count],
    ['Negative amounts', result.negatives.count],
    ...result.excluded.map((e) => [`Left out: ${e.reason.replace(/_/g, ' ')}`, e.count] as [string, number]),
    ['Run by', safeCellText(wp.ranBy)],
    ['Run at', stamp(wp.ranAt)],
    ['Caution', WORKING_PAPER_CAUTION],
  ];
  for (const r of rows) cover.addRow(r);
  cover.getColumn(1).font = { bold: true };
  cover.getColumn(2).alignment = { wrapText: true, vertical: 'top' };

  for (const t of TESTS) testSheet(wb, t, result);

  const sum = wb.addWorksheet('Summation');
  header(sum, [
    { header: 'First two digits', width: 16 },
    { header: 'Sum of amounts', width: 20 },
    { header: 'Share of the total', width: 18 },
    { header: 'Expected share', width: 16 },
  ]);
  result.summation.sums.forEach((s, i) => {
    sum.addRow([String(10 + i), s, result.summation.proportions[i], result.summation.expected]);
  });
  sum.getColumn(3).numFmt = '0.00%';
  sum.getColumn(4).numFmt = '0.00%';

  const second = wb.addWorksheet('Second order');
  header(second, [
    { header: 'First two digits of the difference', width: 34 },
    { header: 'Count', width: 12 },
  ]);
  result.secondOrder.counts.forEach((c, i) => second.addRow([String(10 + i), c]));

  const dup = wb.addWorksheet('Duplication');
  header(dup, [
    { header: 'Amount', width: 20 },
    { header: 'Times', width: 10 },
  ]);
  for (const d of result.duplicates) dup.addRow([safeCellText(d.amount), d.count]);
  if (result.duplicates.length === 0) dup.addRow(['none', null]);

  const other = wb.addWorksheet('Other figures');
  header(other, [
    { header: 'Figure', width: 50 },
    { header: 'Value', width: 20 },
  ]);
  other.addRows([
    ['Amounts of 1,000 or more', result.roundShare.n],
    ['Of those ending in 00', result.roundShare.count],
    ['Share ending in 00', result.roundShare.share],
    ['Share expected', result.roundShare.expected],
    ['P(at least this many ending in 00)', result.roundShare.pValue],
    ['Summation MAD', result.summation.mad],
    ['Second order: differences', result.secondOrder.n],
    ['Second order MAD', result.secondOrder.mad],
    ['Distortion factor', result.distortionFactor.value],
  ]);

  if (result.split) {
    const split = wb.addWorksheet('Split');
    header(split, [
      { header: safeCellText(result.split.column) || 'Group', width: 30 },
      { header: 'Amounts', width: 12 },
      { header: 'First-digit MAD', width: 16 },
      { header: 'Size-aware z', width: 14 },
      { header: 'Verdict', width: 24 },
    ]);
    for (const g of result.split.groups) {
      split.addRow([safeCellText(g.name) || '(blank)', g.count, g.firstDigit.mad, g.sizeAware.zScore, g.sizeAware.verdict.replace('_', ' ')]);
    }
  }
  return Buffer.from(await wb.xlsx.writeBuffer());
}
