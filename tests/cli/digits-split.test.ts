/**
 * `npm run digits -- --by COLUMN` and `--pdf FILE` (issue 15): each group's first-digit counts
 * equal those of the group's amounts profiled alone; the working paper reads back with
 * pdftotext (poppler-utils) holding the file's SHA-256 (node:crypto) and the caution.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { digitResultSchema, profileAmounts } from '../../shared/digits';

const ROOT = path.resolve(__dirname, '../..');
const TSX = path.join(ROOT, 'node_modules/.bin/tsx');
const CLI = path.join(ROOT, 'scripts/digits.ts');

let dir: string;
beforeAll(() => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'plumbline-digits-split-'));
});
afterAll(() => {
  fs.rmSync(dir, { recursive: true, force: true });
});

const ROWS = Array.from({ length: 90 }, (_, i) => ({
  account: ['rent', 'fuel', 'travel'][i % 3],
  amount: (Math.round(10 ** (1 + ((i * 29) % 90) / 25) * 100) / 100).toFixed(2),
}));

describe('npm run digits -- --by and --pdf', () => {
  it('splits by a column: each group equals its amounts profiled alone; --pdf writes the working paper', () => {
    const file = path.join(dir, 'ledger.csv');
    fs.writeFileSync(
      file,
      `date,account,amount\n${ROWS.map((r, i) => `2025-01-${String((i % 28) + 1).padStart(2, '0')},${r.account},${r.amount}`).join('\n')}\n`,
    );
    const pdf = path.join(dir, 'paper.pdf');
    const r = spawnSync(TSX, [CLI, file, '--column', 'amount', '--by', 'account', '--json', '--pdf', pdf], { cwd: ROOT, encoding: 'utf8', timeout: 120_000 });
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    const result = digitResultSchema.parse(JSON.parse(r.stdout));
    expect(result.firstDigit.counts).toEqual(profileAmounts(ROWS.map((x) => x.amount)).firstDigit.counts);
    expect(result.split?.column).toBe('account');
    expect(result.split?.groups.map((g) => g.name)).toEqual(['rent', 'fuel', 'travel']);
    for (const g of result.split!.groups) {
      const alone = profileAmounts(ROWS.filter((x) => x.account === g.name).map((x) => x.amount));
      expect(g.count).toBe(30);
      expect(g.firstDigit.counts).toEqual(alone.firstDigit.counts);
      expect(g.sizeAware).toEqual(alone.sizeAware);
    }
    const text = execFileSync('pdftotext', ['-layout', pdf, '-'], { encoding: 'utf8' });
    const sha = crypto.createHash('sha256').update(fs.readFileSync(file)).digest('hex');
    expect(text).toContain(sha);
    expect(text).toContain('ledger.csv');
    expect(text.replace(/\s+/g, ' ')).toContain('selects figures for a closer look; it is not a finding');
    expect(text).toMatch(/By account/);
  });

  it('--by on a missing column names the columns there are', () => {
    const file = path.join(dir, 'two.csv');
    fs.writeFileSync(file, 'account,amount\nrent,12.00\n');
    const r = spawnSync(TSX, [CLI, file, '--by', 'month'], { cwd: ROOT, encoding: 'utf8', timeout: 120_000 });
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/^digits: two\.csv has no column "month" to split by \(columns: "account", "amount"\)/);
  });
});
