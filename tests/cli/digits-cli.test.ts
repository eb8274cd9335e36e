/**
 * The digits command line (docs/design.md#command-line), run as a child process on fixture files
 * written to a temporary directory: `node_modules/.bin/tsx scripts/digits.ts FILE ...`.
 */

import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import ExcelJS from 'exceljs';
import { digitProfileSchema, profileAmounts } from '../../shared/digits';

const ROOT = path.resolve(__dirname, '../..');
const TSX = path.join(ROOT, 'node_modules/.bin/tsx');
const CLI = path.join(ROOT, 'scripts/digits.ts');

let dir: string;

function write(name: string, text: string): string {
  const file = path.join(dir, name);
  fs.writeFileSync(file, text);
  return file;
}

function run(...args: string[]): { status: number | null; stdout: string; stderr: string } {
  const r = spawnSync(TSX, [CLI, ...args], { cwd: ROOT, encoding: 'utf8', timeout: 60_000 });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}

/** The amounts of most fixtures: 60 Benford-like amounts, some negative, a zero, a repeat. */
const AMOUNTS = [
  ...Array.from({ length: 56 }, (_, i) => (Math.round(10 ** (1 + ((i * 37) % 56) / 14) * 100) / 100).toFixed(2)),
  '-45.10',
  '0',
  '1200.00',
  '1200.00',
];

beforeAll(() => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'plumbline-digits-cli-'));
});

afterAll(() => {
  fs.rmSync(dir, { recursive: true, force: true });
});

describe('npm run digits -- FILE --json', () => {
  it('text file, one amount a line: exactly the JSON of profileAmounts, with the fields of docs/design.md#command-line', () => {
    const file = write('amounts.txt', `\uFEFF${AMOUNTS.join('\r\n')}\r\n\r\n`);
    const r = run(file, '--json');
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    expect(r.stdout.trim().split('\n')).toHaveLength(1); // one JSON object on one line
    const json = JSON.parse(r.stdout) as Record<string, unknown>;
    // the contract's fields (docs/design.md#command-line) ...
    for (const key of ['count', 'excluded', 'firstDigit', 'secondDigit', 'firstTwo', 'lastTwo', 'sizeAware', 'roundShare', 'duplicates', 'summation']) {
      expect(json).toHaveProperty(key);
    }
    for (const test of ['firstDigit', 'secondDigit', 'firstTwo', 'lastTwo']) {
      for (const key of ['counts', 'expected', 'mad', 'conformity', 'chiSquare', 'pValue', 'ks', 'z']) {
        expect(json[test]).toHaveProperty(key);
      }
    }
    for (const key of ['expectedMad', 'excessMad', 'zScore', 'verdict']) expect(json.sizeAware).toHaveProperty(key);
    // ... and exactly what the engine gives for the same amounts, schema-valid
    expect(json).toEqual(JSON.parse(JSON.stringify(profileAmounts(AMOUNTS))));
    const profile = digitProfileSchema.parse(json);
    expect(profile.count).toBe(60);
    expect(profile.firstDigit.counts).toHaveLength(9);
    expect(profile.secondDigit.counts).toHaveLength(10);
    expect(profile.firstTwo.counts).toHaveLength(90);
    expect(profile.lastTwo.counts).toHaveLength(100);
    expect(profile.duplicates[0]).toEqual({ amount: '1200.00', count: 2 });
    expect(profile.excluded.find((e) => e.reason === 'zero')?.count).toBe(1);
    expect(profile.firstDigit.conformity).toBe('too_few'); // 59 amounts: never the fixed thresholds
    expect(['within_expected', 'elevated', 'high']).toContain(profile.sizeAware.verdict);
  });

  it('CSV column chosen with --column (streamed with csv-parse), quoted cells and spaces', () => {
    const rows = AMOUNTS.map((a, i) => `R${i},"line ${i}, item", ${a} ,x`);
    const file = write('items.csv', `return_ref,label,amount_paid,other\n${rows.join('\n')}\n`);
    const r = run(file, '--column', 'amount_paid', '--json');
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    expect(JSON.parse(r.stdout)).toEqual(JSON.parse(JSON.stringify(profileAmounts(AMOUNTS))));
  });

  it('CSV without --column: the "amount" column; a one-column file without header', () => {
    const withHeader = write('lines.csv', `line_code,Amount\n${AMOUNTS.map((a) => `x,${a}`).join('\n')}\n`);
    expect(JSON.parse(run(withHeader, '--json').stdout).count).toBe(60);
    const bare = write('bare.csv', `${AMOUNTS.join('\n')}\n`);
    expect(JSON.parse(run(bare, '--json').stdout).count).toBe(60);
  });

  it('XLSX: the first sheet that has the column; number, text and formula cells', async () => {
    const wb = new ExcelJS.Workbook();
    wb.addWorksheet('returns').addRows([
      ['return_ref', 'tin'],
      ['R1', '123456789'],
    ]);
    const items = wb.addWorksheet('line_items');
    items.addRow(['return_ref', 'line_code', 'amount']);
    AMOUNTS.forEach((a, i) => items.addRow([`R${i}`, 'exp.business.other', i % 2 === 0 ? Number(a) : a]));
    // a formula whose saved result carries binary noise, as Excel stores 0.1 + 0.2
    items.addRow(['R99', 'exp.business.other', { formula: '0.1+0.2', result: 0.1 + 0.2 }]);
    const file = path.join(dir, 'batch.xlsx');
    await wb.xlsx.writeFile(file);
    const r = run(file, '--column', 'amount', '--json');
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    const json = digitProfileSchema.parse(JSON.parse(r.stdout));
    expect(json).toEqual(JSON.parse(JSON.stringify(profileAmounts([...AMOUNTS, '0.30']))));
    // without --column: the returns sheet has neither one column nor "amount"; line_items has
    expect(JSON.parse(run(file, '--json').stdout).count).toBe(61);
  });
});

describe('npm run digits -- FILE (readable table)', () => {
  it('prints the digit tables, conformity, size-aware verdict and the other tests', () => {
    const file = write('table.txt', AMOUNTS.join('\n'));
    const r = run(file);
    expect(r.status).toBe(0);
    expect(r.stderr).toBe('');
    const out = r.stdout;
    expect(out).toMatch(/^Digit profile of table\.txt \(one amount a line\)/);
    expect(out).toMatch(/60 amounts \(58 positive, 1 negative\); left out: zero: 1/);
    expect(out).toMatch(/First digit \(n = 59\)\n\s+digit\s+count\s+observed\s+expected\s+Z\n\s+1\s+\d+\s+[\d.]+ %\s+30\.1 %/);
    expect(out).toMatch(/\n\s+9\s+\d+\s+[\d.]+ %\s+4\.6 %/);
    expect(out).toMatch(/Second digit \(n = \d+\)/);
    expect(out).toMatch(/First two digits \(n = \d+; 90 groups\)/);
    expect(out).toMatch(/Last two digits \(n = \d+; 100 groups\)/);
    expect(out).toMatch(/MAD 0\.\d{5}: too few amounts for the fixed thresholds \(need 800\) · chi-square [\d.]+, df 8, p /);
    expect(out).toMatch(/Size-aware .*\n\s+First digit \(n = 59\): MAD 0\.\d{4} vs 0\.\d{4} ± 0\.\d{4} expected, .*: (within_expected|elevated|high)/);
    expect(out).toMatch(/Round amounts \(>= 100 ending in 00\): \d+ of \d+/);
    expect(out).toMatch(/Repeated amounts: 1200\.00 ×2/);
    expect(out).toMatch(/Distortion factor: /);
    expect(out).toMatch(/prove nothing by themselves/);
  });
});

describe('errors: one clear line on stderr, exit code 2', () => {
  it.each([
    ['a comma decimal, naming the line', 'bad.txt', '1.00\n2.00\n12,5\n', [], /^digits: bad\.txt: Amount at line 3 \("12,5"\) contains a comma/],
    ['text that is no amount', 'exp.txt', '1e21\nabc\n', [], /^digits: exp\.txt: Amount at line 2 \("abc"\) is not a valid amount/],
    [
      '3 decimals in a CSV cell, naming line and column',
      'bad.csv',
      'amount\n1.00\n2.005\n',
      [],
      /^digits: bad\.csv: Amount at line 3, column "amount" \("2\.005"\) has more than 2 decimals/,
    ],
    ['an unknown column', 'cols.csv', 'a,b\n1,2\n', ['--column', 'amount'], /^digits: cols\.csv has no column "amount" \(columns: "a", "b"\)/],
    ['several columns and no --column', 'many.csv', 'a,b\n1,2\n', [], /^digits: many\.csv has several columns \("a", "b"\); choose one with --column NAME/],
    ['--column on a text file', 'plain.txt', '1\n', ['--column', 'x'], /^digits: --column applies to CSV and XLSX files/],
    ['an unknown option', 'opt.txt', '1\n', ['--csv'], /^digits: unknown option --csv; usage: npm run --silent digits -- FILE/],
  ])('%s', (_what, name, text, extra, message) => {
    const file = write(name, text);
    const r = run(file, ...extra);
    expect(r.status).toBe(2);
    expect(r.stdout).toBe('');
    expect(r.stderr).toMatch(message);
    expect(r.stderr.trimEnd().split('\n')).toHaveLength(1);
  });

  it('a missing file and no file at all', () => {
    const missing = run(path.join(dir, 'nope.txt'));
    expect(missing.status).toBe(2);
    expect(missing.stderr).toMatch(/^digits: cannot read .*nope\.txt: no such file\n$/);
    const none = run();
    expect(none.status).toBe(2);
    expect(none.stderr).toMatch(/^digits: no FILE given; usage: /);
  });

  it('an XLSX cell that is not an amount, named by sheet and cell', async () => {
    const wb = new ExcelJS.Workbook();
    const ws = wb.addWorksheet('amounts');
    ws.addRows([['amount'], [12.5], ['abc'], [3]]);
    const file = path.join(dir, 'bad.xlsx');
    await wb.xlsx.writeFile(file);
    const r = run(file, '--json');
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/^digits: bad\.xlsx: Amount at sheet "amounts" cell A3 \("abc"\) is not a valid amount/);
  });
});
