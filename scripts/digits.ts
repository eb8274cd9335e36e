/**
 * Digit profile of one column of amounts (docs/design.md#command-line):
 *
 *   npm run --silent digits -- FILE [--column NAME] [--by COLUMN] [--json] [--pdf OUT.pdf]
 *
 * --by COLUMN splits the amounts by that column's text (an account, a month): the output adds
 * each group's first-digit figures (`split` in the JSON). --pdf writes the working paper
 * (server/analyses/working-paper-pdf.ts) with the file's SHA-256, the user and the time.
 *
 * FILE is a text file with one amount a line (blank lines skipped), or a CSV or XLSX file
 * (by extension) whose column NAME holds the amounts. Without --column, a file with one
 * column uses it, otherwise a column called "amount" (any case). CSV and XLSX files have a
 * header row, except that a one-column file whose first cell is an amount is read as
 * amounts throughout. In XLSX, the first sheet having the column is read.
 *
 * Amounts: an optional minus sign, digits, at most 2 decimals after a point (shared/digits
 * parse.ts). Surrounding spaces are trimmed. XLSX number cells are read like the batch
 * intake reads them (server/batches/intake/cell-text.ts): Excel keeps doubles, so a number
 * within a millionth of a cent of a cent amount is that amount.
 *
 * --json prints the profile object (shared/digits/profile.ts, schema in schema.ts) as one
 * line; otherwise a readable table. Any problem: one line on stderr, exit code 2.
 */

import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import {
  AmountParseError,
  DIGIT_TEST_TITLES as TEST_TITLE,
  MIN_N_FOR_CONFORMITY,
  binLabel,
  digitResult,
  fixedOrDash as fixed,
  groupsByZ,
  largestDeviations,
  pValueText as pValue,
  percentOrDash as pct,
  type GroupFigures,
  type DigitProfile,
  type DigitTestName,
  type DigitTestResult,
  type SizeAwareResult,
} from '../shared/digits';
import { AmountFileError, readAmountsFile, type AmountFileResult } from '../server/analyses/amount-file';
import { renderWorkingPaperPdf } from '../server/analyses/working-paper-pdf';

/** A problem to report as one line on stderr, exit code 2. */
class UsageError extends Error {}

const USAGE = 'usage: npm run --silent digits -- FILE [--column NAME] [--by COLUMN] [--json] [--pdf OUT.pdf]';

interface Options {
  file: string;
  column: string | null;
  by: string | null;
  pdf: string | null;
  json: boolean;
}

function parseArgs(argv: string[]): Options | 'help' {
  let file: string | null = null;
  let column: string | null = null;
  let by: string | null = null;
  let pdf: string | null = null;
  let json = false;
  const valueOf = (name: string, v: string | undefined): string => {
    if (v === undefined || v === '') throw new UsageError(`${name} needs a value; ${USAGE}`);
    return v;
  };
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    if (a === '--help' || a === '-h') return 'help';
    if (a === '--json') json = true;
    else if (a === '--column') {
      const v = argv[++i];
      if (v === undefined || v === '') throw new UsageError(`--column needs a column name; ${USAGE}`);
      column = v;
    } else if (a.startsWith('--column=')) {
      column = a.slice('--column='.length);
      if (column === '') throw new UsageError(`--column needs a column name; ${USAGE}`);
    } else if (a === '--by') by = valueOf('--by', argv[++i]);
    else if (a.startsWith('--by=')) by = valueOf('--by', a.slice('--by='.length));
    else if (a === '--pdf') pdf = valueOf('--pdf', argv[++i]);
    else if (a.startsWith('--pdf=')) pdf = valueOf('--pdf', a.slice('--pdf='.length));
    else if (a.startsWith('-') && a !== '-') throw new UsageError(`unknown option ${a}; ${USAGE}`);
    else if (file === null) file = a;
    else throw new UsageError(`one FILE only (got ${file} and ${a}); ${USAGE}`);
  }
  if (file === null) throw new UsageError(`no FILE given; ${USAGE}`);
  return { file, column, by, pdf, json };
}

// ---------------------------------------------------------------------------------------
// The readable table

function int(n: number): string {
  return n.toLocaleString('en-US');
}

function summaryLine(test: DigitTestName, r: DigitTestResult): string {
  const level = r.conformity === 'too_few' ? `too few amounts for the fixed thresholds (need ${int(MIN_N_FOR_CONFORMITY[test])})` : r.conformity;
  const chi = `chi-square ${fixed(r.chiSquare, 2)}, df ${r.df}, p ${pValue(r.pValue)}${r.chiSquareValid || r.n === 0 ? '' : ' (expected counts below 5)'}`;
  return `  MAD ${fixed(r.mad, 5)}: ${level} · ${chi} · KS ${fixed(r.ks, 4)}`;
}

function fullTable(test: DigitTestName, r: DigitTestResult): string[] {
  const lines = [`${TEST_TITLE[test]} (n = ${int(r.n)})`, '  digit      count   observed   expected       Z'];
  r.counts.forEach((c, i) => {
    const obs = r.n > 0 ? c / r.n : null;
    lines.push(
      `  ${binLabel(test, i).padStart(5)}  ${int(c).padStart(9)}  ${pct(obs).padStart(9)}  ${pct(r.expected[i]).padStart(9)}  ${fixed(r.z[i], 2).padStart(6)}`,
    );
  });
  lines.push(summaryLine(test, r));
  return lines;
}

function shortTable(test: DigitTestName, r: DigitTestResult): string[] {
  const lines = [`${TEST_TITLE[test]} (n = ${int(r.n)}; ${r.counts.length} groups)`, summaryLine(test, r)];
  if (r.n > 0) {
    const top = largestDeviations(test, r).map((d) => `${d.label} ${pct(d.observed)} vs ${pct(d.expected)} (Z ${d.z.toFixed(2)})`);
    lines.push(`  largest deviations: ${top.join(' · ')}`);
  }
  return lines;
}

function sizeLine(s: SizeAwareResult): string {
  if (s.n === 0 || s.expectedMad === null) return `${TEST_TITLE[s.test]}: no amounts`;
  const verdict = s.verdict === 'too_few' ? `too few amounts (n = ${s.n})` : s.verdict;
  return `${TEST_TITLE[s.test]} (n = ${int(s.n)}): MAD ${fixed(s.mad, 4)} vs ${fixed(s.expectedMad, 4)} ± ${fixed(
    s.sdMad,
    4,
  )} expected, excess ${fixed(s.excessMad, 4)}, z ${fixed(s.zScore, 2)}: ${verdict}`;
}

function renderTable(p: DigitProfile, source: string): string {
  const ex = p.excluded.map((e) => `${e.reason.replace('_', ' ')}: ${int(e.count)}`).join(' · ');
  const lines: string[] = [
    `Digit profile of ${source}`,
    `${int(p.count)} amounts (${int(p.positives.count)} positive, ${int(p.negatives.count)} negative); left out: ${ex}`,
    '',
    ...fullTable('firstDigit', p.firstDigit),
    '',
    ...fullTable('secondDigit', p.secondDigit),
    '',
    ...shortTable('firstTwo', p.firstTwo),
    '',
    ...shortTable('lastTwo', p.lastTwo),
    '',
    'Size-aware (MAD against its expected value for this n; the figure for one return):',
    `  ${sizeLine(p.sizeAware)}`,
    ...(['secondDigit', 'firstTwo', 'lastTwo'] as const).map((t) => `  ${sizeLine(p.sizeAwareByTest[t])}`),
    '',
    `Round amounts (>= 100 ending in 00): ${int(p.roundShare.count)} of ${int(p.roundShare.n)} = ${pct(
      p.roundShare.share,
    )}, expected 1.0 %, P(at least this many) ${pValue(p.roundShare.pValue)}`,
    `Repeated amounts: ${p.duplicates.length === 0 ? 'none' : p.duplicates.map((d) => `${d.amount} ×${d.count}`).join(' · ')}`,
    `Summation (share of the total by first two digits, 1.1 % each expected): ${
      p.summation.largest.length === 0 ? '—' : p.summation.largest.map((g) => `${g.digits} ${pct(g.share)}`).join(' · ')
    }; MAD ${fixed(p.summation.mad, 5)}`,
    `Second order (differences of sorted amounts, n = ${int(p.secondOrder.n)}): MAD ${fixed(p.secondOrder.mad, 5)}`,
    `Distortion factor: ${p.distortionFactor.value === null ? '—' : pct(p.distortionFactor.value)} (mean ${fixed(
      p.distortionFactor.mean,
      2,
    )}, expected ${fixed(p.distortionFactor.expectedMean, 2)})`,
    `Positive amounts: first digit MAD ${fixed(p.positives.firstDigit.mad, 4)}, ${p.positives.sizeAware.verdict} · ` +
      `negative amounts: first digit MAD ${fixed(p.negatives.firstDigit.mad, 4)}, ${p.negatives.sizeAware.verdict}`,
    '',
    'Digit tests point to amounts worth a closer look; they prove nothing by themselves.',
    '',
  ];
  return lines.join('\n');
}

/** The groups of a split, one line each, highest size-aware z first. */
function renderGroups(split: { column: string; groups: GroupFigures[] }): string {
  const rows = groupsByZ(split.groups);
  const lines = [`By ${split.column} (${int(split.groups.length)} groups; first digit, highest size-aware z first):`];
  for (const g of rows) {
    lines.push(
      `  ${(g.name || '(blank)').padEnd(24)} ${int(g.count).padStart(9)} amounts  MAD ${fixed(g.firstDigit.mad, 4)}  z ${fixed(g.sizeAware.zScore, 2).padStart(6)}  ${g.sizeAware.verdict}`,
    );
  }
  return `${lines.join('\n')}\n`;
}

// ---------------------------------------------------------------------------------------

async function main(): Promise<void> {
  const opts = parseArgs(process.argv.slice(2));
  if (opts === 'help') {
    process.stdout.write(`${USAGE}\n`);
    return;
  }
  const { file, column, by, pdf, json } = opts;
  let stat: fs.Stats;
  try {
    stat = fs.statSync(file);
  } catch {
    throw new UsageError(`cannot read ${file}: no such file`);
  }
  if (!stat.isFile()) throw new UsageError(`${file} is not a file`);
  if (column !== null && !['.csv', '.xlsx'].includes(path.extname(file).toLowerCase())) {
    throw new UsageError('--column applies to CSV and XLSX files; a text file has one amount a line');
  }
  if (by !== null && !['.csv', '.xlsx'].includes(path.extname(file).toLowerCase())) {
    throw new UsageError('--by applies to CSV and XLSX files with a header row; a text file has one amount a line');
  }
  let read: AmountFileResult;
  try {
    read = await readAmountsFile(file, column, undefined, undefined, by);
  } catch (e) {
    if (e instanceof AmountParseError) throw new UsageError(`${path.basename(file)}: ${e.message}`);
    if (e instanceof AmountFileError) throw new UsageError(e.message);
    throw new UsageError(`${path.basename(file)}: cannot be read: ${e instanceof Error ? e.message : String(e)}`);
  }
  const result = digitResult(read, read.groups);
  if (pdf !== null) {
    const bytes = await renderWorkingPaperPdf({
      caseRef: null,
      sourceLabel: `File ${path.basename(file)}`,
      fileName: path.basename(file),
      sha256: crypto.createHash('sha256').update(fs.readFileSync(file)).digest('hex'),
      what: read.what,
      ranBy: `${os.userInfo().username} (command line)`,
      ranAt: new Date(),
      profile: result,
      split: result.split,
    });
    try {
      fs.writeFileSync(pdf, bytes);
    } catch (e) {
      throw new UsageError(`cannot write ${pdf}: ${e instanceof Error ? e.message : String(e)}`);
    }
  }
  if (json) process.stdout.write(`${JSON.stringify(result)}\n`);
  else process.stdout.write(renderTable(result, `${path.basename(file)} (${read.what})`) + (result.split ? renderGroups(result.split) : ''));
}

main().catch((e: unknown) => {
  const message = e instanceof Error ? e.message : String(e);
  process.stderr.write(`digits: ${message.replace(/\s*\n\s*/g, ' ')}\n`);
  process.exitCode = 2;
});
