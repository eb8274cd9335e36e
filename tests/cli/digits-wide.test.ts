/**
 * `npm run digits` on amounts of any size (issue 15): counts, MAD and chi-square equal an
 * independent computation (tests/unit/digits/wide-reference.ts: BigInt digits, log10
 * proportions, jstat's chi-square) for integers to hundreds of digits and for values in
 * scientific notation, from a text file, a CSV column and XLSX number cells.
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import ExcelJS from 'exceljs';
import { digitProfileSchema, type DigitProfileJson } from '../../shared/digits';
import { expectAgreement, powersOfTwo, scientificValues } from '../unit/digits/wide-reference';

const ROOT = path.resolve(__dirname, '../..');
const TSX = path.join(ROOT, 'node_modules/.bin/tsx');
const CLI = path.join(ROOT, 'scripts/digits.ts');
let dir: string;
beforeAll(() => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'plumbline-digits-wide-'));
});
afterAll(() => {
  fs.rmSync(dir, { recursive: true, force: true });
});

function runJson(...args: string[]): DigitProfileJson {
  const r = spawnSync(TSX, [CLI, ...args, '--json'], { cwd: ROOT, encoding: 'utf8', timeout: 120_000 });
  expect(r.stderr).toBe('');
  expect(r.status).toBe(0);
  return digitProfileSchema.parse(JSON.parse(r.stdout));
}

describe('npm run digits: amounts of any size', () => {
  it('a text file of 2^0 .. 2^1000 and 10^300 (to 302 digits) equals BigInt digits and jstat', () => {
    const amounts = [...powersOfTwo(1000), { value: 10n ** 300n, text: `1${'0'.repeat(300)}` }];
    const file = path.join(dir, 'powers.txt');
    fs.writeFileSync(file, amounts.map((a) => a.text).join('\n'));
    expectAgreement(runJson(file), amounts);
  });

  it('the issue example 17592186044416 is counted, not refused', () => {
    const file = path.join(dir, 'one.txt');
    fs.writeFileSync(file, '17592186044416\n');
    const p = runJson(file);
    expect(p.firstDigit.counts[0]).toBe(1);
    expect(p.lastTwo.counts[16]).toBe(1);
  });

  it('a CSV column in scientific notation equals the independent computation', () => {
    const amounts = scientificValues(800);
    const file = path.join(dir, 'sci.csv');
    fs.writeFileSync(file, `account,value\n${amounts.map((a, i) => `A${i % 3},${a.text}`).join('\n')}\n`);
    expectAgreement(runJson(file, '--column', 'value'), amounts);
  });

  it('XLSX number cells of 10^13 and more (doubles) are read through their shortest decimal text', async () => {
    const values = [1.2e15, 17592186044416, 9.87654321e20, 3e100, 123.45];
    const wb = new ExcelJS.Workbook();
    const ws = wb.addWorksheet('Ledger');
    ws.addRow(['amount']);
    for (const v of values) ws.addRow([v]);
    const file = path.join(dir, 'big.xlsx');
    await wb.xlsx.writeFile(file);
    // String(double) is the shortest text that reads back as the double (ECMAScript Number::toString).
    const amounts = values.map((v) => {
      const text = String(v);
      const m = /^(\d+)(?:\.(\d+))?(?:e\+(\d+))?$/.exec(text)!;
      const frac = m[2] ?? '';
      const exp = Number(m[3] ?? 0);
      const whole = exp >= frac.length ? BigInt(m[1] + frac) * 10n ** BigInt(exp - frac.length) : BigInt(m[1]);
      return { value: whole, text };
    });
    expectAgreement(runJson(file), amounts);
  });
});
