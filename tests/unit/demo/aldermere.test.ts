import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import {
  DEFAULT_HABIT_SHARES,
  DEMO_YEARS,
  generate,
  generateReturns,
  HABIT_KINDS,
  NO_HABITS,
  parseHabitShares,
  PLANT_KINDS,
  type GeneratedBatch,
  type GeneratedReturn,
  type HabitKind,
  type PlantKind,
} from '../../../shared/demo/aldermere';
import { writeAnswers } from '../../../server/seed/batch-files';
import { createRng } from '../../../shared/demo/prng';
import { LineItemRowSchema, returnRowSchema, statementRowSchema } from '../../../shared/returns/batch-rows';
import { ALDERMERE_TAX, computeTotals, type LineCode } from '../../../shared/returns/line-codes';
import { centsFromDecimal } from '../../../shared/returns/money';

const years = { first: 2016, last: 2025 };
const batch = generate({ seed: 'unit', returns: 4000, plantShare: 0.06 });
const planted = new Set(batch.labels.map((l) => l.returnRef));
const linesOf = new Map<string, { code: LineCode; cents: number }[]>();
for (const l of batch.lineItems) {
  const list = linesOf.get(l.return_ref) ?? [];
  list.push({ code: l.line_code as LineCode, cents: centsFromDecimal(l.amount) });
  linesOf.set(l.return_ref, list);
}

describe('the seeded PRNG', () => {
  it('repeats for the same seed and differs for another', () => {
    const a = createRng(7);
    const b = createRng(7);
    const c = createRng(8);
    const xs = Array.from({ length: 5 }, () => a.next());
    expect(Array.from({ length: 5 }, () => b.next())).toEqual(xs);
    expect(Array.from({ length: 5 }, () => c.next())).not.toEqual(xs);
  });

  it('draws normals with mean 0 and sd 1', () => {
    const r = createRng('normal');
    const xs = Array.from({ length: 20_000 }, () => r.normal());
    const mean = xs.reduce((s, x) => s + x, 0) / xs.length;
    const sd = Math.sqrt(xs.reduce((s, x) => s + (x - mean) ** 2, 0) / xs.length);
    expect(Math.abs(mean)).toBeLessThan(0.03);
    expect(Math.abs(sd - 1)).toBeLessThan(0.03);
  });
});

describe('the Aldermere generator', () => {
  it('is repeatable: the same seed gives the same batch', () => {
    const again = generate({ seed: 'unit', returns: 4000, plantShare: 0.06 });
    expect(again.lineItems.length).toBe(batch.lineItems.length);
    expect(again.returns.slice(0, 50)).toEqual(batch.returns.slice(0, 50));
    expect(again.labels).toEqual(batch.labels);
  });

  it('makes the requested number of returns over the scenario years, each taxpayer filing every year', () => {
    expect(batch.returns).toHaveLength(4000);
    expect(new Set(batch.returns.map((r) => r.tax_year))).toEqual(new Set(DEMO_YEARS.map(String)));
    expect(new Set(batch.returns.map((r) => r.tin)).size).toBe(1000);
    // TINs from the 000 area block, which the SSA never issues (ssa.gov/employer/randomizationfaqs.html).
    for (const r of batch.returns) expect(r.tin).toMatch(/^000\d{6}$/);
    expect(new Set(batch.returns.map((r) => r.return_ref)).size).toBe(4000);
    const perReturn = batch.lineItems.length / batch.returns.length;
    expect(perReturn).toBeGreaterThan(15);
    expect(perReturn).toBeLessThan(60);
  });

  it('writes only rows the intake accepts', () => {
    const rs = returnRowSchema(years);
    const ss = statementRowSchema(years);
    for (const r of batch.returns) expect(rs.safeParse(r).success).toBe(true);
    for (const l of batch.lineItems) if (!LineItemRowSchema.safeParse(l).success) throw new Error(JSON.stringify(l));
    for (const s of batch.statements) expect(ss.safeParse(s).success).toBe(true);
  });

  it('plants about the requested share, labels each plant with known kinds, and never writes labels into the batch', () => {
    const share = batch.labels.length / batch.returns.length;
    expect(share).toBeGreaterThan(0.04);
    expect(share).toBeLessThan(0.08);
    const kinds = new Set<PlantKind>(batch.labels.flatMap((l) => l.kinds));
    for (const k of kinds) expect(Object.keys(PLANT_KINDS)).toContain(k);
    expect(kinds.size).toBeGreaterThanOrEqual(8);
    for (const l of batch.labels) expect(l.detail.length).toBeGreaterThan(10);
    for (const l of batch.labels) expect(l.habits).toEqual([]); // habits are off unless asked for
    expect(batch.answers).toHaveLength(4000);
    expect(batch.answers.filter((a) => a.kinds.length)).toEqual(batch.labels);
    const columns = new Set(Object.keys(batch.returns[0]));
    expect(columns).toEqual(new Set(['return_ref', 'tin', 'tax_year', 'taxpayer_name', 'activity_code', 'preparer_id', 'email', 'postal_address']));
    // The mill: one preparer all of whose returns are planted.
    const mill = batch.labels.find((l) => l.kinds.includes('preparer_mill'))!.preparerId;
    const millReturns = batch.returns.filter((r) => r.preparer_id === mill);
    expect(millReturns.length).toBeGreaterThan(8);
    for (const r of millReturns) expect(planted.has(r.return_ref)).toBe(true);
  });

  it('makes typical returns that add up by the rules and match their statements', () => {
    const statementsOf = new Map<string, number>();
    for (const s of batch.statements) {
      if (s.kind === 'sales') continue;
      const k = `${s.tin}:${s.tax_year}:${s.kind}`;
      statementsOf.set(k, (statementsOf.get(k) ?? 0) + centsFromDecimal(s.amount));
    }
    for (const r of batch.returns) {
      if (planted.has(r.return_ref)) continue;
      const t = computeTotals(linesOf.get(r.return_ref)!);
      expect(t.reported.income).toBe(t.income);
      expect(t.reported.refund ?? 0).toBe(t.refund);
      for (const kind of ['wages', 'interest'] as const) {
        const reported = kind === 'wages' ? t.wages : t.interest;
        expect(reported).toBeGreaterThanOrEqual(statementsOf.get(`${r.tin}:${r.tax_year}:${kind}`) ?? 0);
      }
    }
  });

  it('breaks the rules where it says so', () => {
    for (const l of batch.labels) {
      const t = computeTotals(linesOf.get(l.returnRef)!);
      if (l.kinds.includes('totals_mismatch')) expect(t.reported.income).toBeLessThan(t.income);
      if (l.kinds.includes('refund_inflated')) expect(t.reported.refund!).toBeGreaterThan(t.refund);
      if (l.kinds.includes('expenses_exceed_receipts')) expect(t.businessExpenses).toBeGreaterThanOrEqual(Math.round(t.receipts * 0.9));
    }
  });

  it('gives typical itemised amounts first digits close to Benford, and invented ones far from it', () => {
    const mad = (amounts: string[]) => {
      const counts = new Array(10).fill(0);
      let n = 0;
      for (const a of amounts) {
        const d = a.replace(/^[-0.]+/, '')[0];
        if (!d) continue;
        counts[Number(d)]++;
        n++;
      }
      let sum = 0;
      for (let d = 1; d <= 9; d++) sum += Math.abs(counts[d] / n - Math.log10(1 + 1 / d));
      return sum / 9;
    };
    const itemised = (l: { line_code: string }) => /^(exp|ded)\./.test(l.line_code);
    const honest = batch.lineItems.filter((l) => itemised(l) && !planted.has(l.return_ref)).map((l) => l.amount);
    const inventedRefs = new Set(batch.labels.filter((l) => l.kinds.includes('invented_digits')).map((l) => l.returnRef));
    const invented = batch.lineItems.filter((l) => itemised(l) && inventedRefs.has(l.return_ref)).map((l) => l.amount);
    expect(honest.length).toBeGreaterThan(20_000);
    expect(mad(honest)).toBeLessThan(0.006); // Nigrini's "close conformity" line
    expect(mad(invented)).toBeGreaterThan(0.015); // past "nonconformity"
  });

  it('streams the same returns that generate() collects', () => {
    const first = generateReturns({ seed: 'unit', returns: 4000, plantShare: 0.06 }).next().value as GeneratedReturn;
    expect(first.ret).toEqual(batch.returns[0]);
    expect(first.lines.map((l) => l.amount)).toEqual(batch.lineItems.slice(0, first.lines.length).map((l) => l.amount));
  });
});

// ---- Habits of typical filers (issue 10) ----

const HABIT_SHARES = DEFAULT_HABIT_SHARES;
const habitBatch = generate({ seed: 'unit-habits', returns: 4000, plantShare: 0.06, habits: HABIT_SHARES });
const habitLines = new Map<string, { code: LineCode; cents: number }[]>();
for (const l of habitBatch.lineItems) {
  const list = habitLines.get(l.return_ref) ?? [];
  list.push({ code: l.line_code as LineCode, cents: centsFromDecimal(l.amount) });
  habitLines.set(l.return_ref, list);
}
const answerOf = new Map(habitBatch.answers.map((a) => [a.returnRef, a]));
const HABITS = Object.keys(HABIT_KINDS) as HabitKind[];
/** Line codes with n or more entries of one amount, and that amount. */
function repeats(lines: { code: LineCode; cents: number }[], n: number): { code: LineCode; cents: number; count: number }[] {
  const counts = new Map<string, number>();
  for (const l of lines)
    if (!l.code.startsWith('tot.') && l.code !== 'tax.refund') counts.set(`${l.code}|${l.cents}`, (counts.get(`${l.code}|${l.cents}`) ?? 0) + 1);
  return [...counts].filter(([, c]) => c >= n).map(([k, count]) => ({ code: k.split('|')[0] as LineCode, cents: Number(k.split('|')[1]), count }));
}
function fingerprint(b: GeneratedBatch): string {
  let h = 0;
  const text = JSON.stringify([b.returns, b.lineItems, b.statements, b.answers]);
  for (let i = 0; i < text.length; i++) h = (Math.imul(h, 31) + text.charCodeAt(i)) | 0;
  return `${text.length}:${h}`;
}

describe('habits of typical filers', () => {
  it('gives each habit to about its configured share of taxpayers, labelled on the returns where it shows', () => {
    const taxpayers = new Map<string, Set<HabitKind>>();
    for (const a of habitBatch.answers) {
      const set = taxpayers.get(a.tin) ?? new Set<HabitKind>();
      for (const h of a.habits) set.add(h);
      taxpayers.set(a.tin, set);
    }
    expect(taxpayers.size).toBe(1000);
    // 1,000 taxpayers: a binomial share's standard deviation is at most 0.016, so ±0.05 is over 3 of them.
    for (const h of HABITS) {
      const share = [...taxpayers.values()].filter((s) => s.has(h)).length / taxpayers.size;
      expect({ h, share: Math.abs(share - HABIT_SHARES[h]) < 0.05 }).toEqual({ h, share: true });
    }
    // Typical returns carry habit labels too.
    expect(habitBatch.answers.filter((a) => !a.kinds.length && a.habits.length).length).toBeGreaterThan(1500);
    for (const a of habitBatch.answers) if (a.habits.length) expect(a.habitDetail.length).toBeGreaterThan(5);
  });

  it('writes only rows the intake accepts, habits and all', () => {
    const rs = returnRowSchema(years);
    const ss = statementRowSchema(years);
    for (const r of habitBatch.returns) if (!rs.safeParse(r).success) throw new Error(JSON.stringify(r));
    for (const l of habitBatch.lineItems) if (!LineItemRowSchema.safeParse(l).success) throw new Error(JSON.stringify(l));
    for (const x of habitBatch.statements) if (!ss.safeParse(x).success) throw new Error(JSON.stringify(x));
  });

  it('sets each share by option: one habit alone, or none', () => {
    const only = generate({ seed: 'unit-habits-one', returns: 2000, plantShare: 0.05, habits: { whole_units: 0.6 } });
    const tins = new Set(only.answers.filter((a) => a.habits.includes('whole_units')).map((a) => a.tin));
    expect(tins.size / 500).toBeGreaterThan(0.53);
    expect(tins.size / 500).toBeLessThan(0.67);
    expect(only.answers.every((a) => a.habits.every((h) => h === 'whole_units'))).toBe(true);
    const none = generate({ seed: 'unit-habits-one', returns: 400, habits: NO_HABITS });
    expect(none.answers.every((a) => a.habits.length === 0)).toBe(true);
    expect(fingerprint(none)).toBe(fingerprint(generate({ seed: 'unit-habits-one', returns: 400 })));
  });

  it('shows each labelled habit in the figures', () => {
    const prepared = habitBatch.returns.filter((r) => r.preparer_id);
    const firm = habitBatch.answers.find((a) => a.habits.includes('large_firm'))!.preparerId;
    const firmReturns = prepared.filter((r) => r.preparer_id === firm);
    expect(firmReturns.length / prepared.length).toBeGreaterThan(0.3); // a large share of prepared returns
    const byTinYear = new Map(habitBatch.returns.map((r) => [`${r.tin}:${r.tax_year}`, r]));
    for (const a of habitBatch.answers) {
      const lines = habitLines.get(a.returnRef)!;
      const t = computeTotals(lines);
      if (a.habits.includes('large_firm')) expect(a.preparerId).toBe(firm);
      else expect(a.preparerId).not.toBe(firm);
      if (a.habits.includes('whole_units')) for (const l of lines) expect(Math.abs(l.cents % 100)).toBe(0);
      if (a.kinds.length) continue; // below: typical returns only
      if (a.habits.includes('monthly_gifts')) expect(repeats(lines, 12).some((r) => r.code === 'ded.charity')).toBe(true);
      if (a.habits.includes('recurring_bills')) expect(repeats(lines, 2).some((r) => r.code !== 'ded.charity' && r.code !== 'inc.wages')).toBe(true);
      if (a.habits.includes('zero_tax_refund')) {
        expect(t.tax).toBe(0);
        expect(t.income - t.deductions).toBeLessThan(ALDERMERE_TAX.allowanceCents);
        expect(t.reported.refund).toBe(t.withheld);
      }
      if (a.habits.includes('retirement_drop')) {
        const before = habitLines.get(byTinYear.get(`${a.tin}:${a.taxYear - 1}`)!.return_ref)!;
        const tb = computeTotals(before);
        if (answerOf.get(byTinYear.get(`${a.tin}:${a.taxYear - 1}`)!.return_ref)!.habits.includes('retirement_drop')) {
          expect(t.wages + t.receipts).toBe(0); // the years after: interest only
        } else {
          expect(t.wages + t.receipts).toBeLessThan(tb.wages + tb.receipts); // the year of retirement: part of the year
        }
      }
    }
    // Recurring bills come both round and with cents.
    const bills = habitBatch.answers
      .filter((a) => a.habits.includes('recurring_bills') && !a.kinds.length && !a.habits.includes('whole_units'))
      .flatMap((a) => repeats(habitLines.get(a.returnRef)!, 12).filter((r) => r.code !== 'ded.charity'));
    const round = bills.filter((b) => b.cents % 100 === 0).length / bills.length;
    expect(round).toBeGreaterThan(0.25);
    expect(round).toBeLessThan(0.75);
    // Returns without the whole-unit habit nearly always have cents somewhere.
    const others = habitBatch.answers.filter((a) => !a.habits.includes('whole_units'));
    expect(others.filter((a) => habitLines.get(a.returnRef)!.some((l) => l.cents % 100 !== 0)).length / others.length).toBeGreaterThan(0.98);
  });

  it('keeps typical returns with habits adding up by the rules and matching their statements (whole units within half a unit)', () => {
    const statementsOf = new Map<string, number>();
    for (const s of habitBatch.statements) {
      if (s.kind === 'sales') continue;
      const k = `${s.tin}:${s.tax_year}:${s.kind}`;
      statementsOf.set(k, (statementsOf.get(k) ?? 0) + centsFromDecimal(s.amount));
    }
    for (const a of habitBatch.answers) {
      if (a.kinds.length) continue;
      const slack = a.habits.includes('whole_units') ? 50 : 0;
      const t = computeTotals(habitLines.get(a.returnRef)!);
      expect(t.reported.income).toBe(t.income);
      expect(Math.abs((t.reported.refund ?? 0) - t.refund)).toBeLessThanOrEqual(slack);
      for (const kind of ['wages', 'interest'] as const) {
        const reported = kind === 'wages' ? t.wages : t.interest;
        expect(reported + slack * 3).toBeGreaterThanOrEqual(statementsOf.get(`${a.tin}:${a.taxYear}:${kind}`) ?? 0);
      }
    }
  });

  it('plants invented figures inside the habits: a monthly invented expense, invented figures in whole units', () => {
    const recurring = habitBatch.labels.filter((l) => l.kinds.includes('invented_recurring'));
    const whole = habitBatch.labels.filter((l) => l.kinds.includes('invented_whole_units'));
    expect(recurring.length).toBeGreaterThan(5);
    expect(whole.length).toBeGreaterThan(5);
    for (const l of recurring) {
      const lines = habitLines.get(l.returnRef)!;
      const t = computeTotals(lines);
      const big = repeats(lines, 12).filter((r) => r.count * r.cents >= 0.15 * Math.min(t.receipts || Infinity, Math.max(t.income, 2_000_000)) * 0.8);
      expect({ ref: l.returnRef, found: big.length > 0 }).toEqual({ ref: l.returnRef, found: true });
      expect(l.detail).toMatch(/entered 12 times/);
    }
    for (const l of whole) {
      expect(l.habits).toContain('whole_units');
      for (const x of habitLines.get(l.returnRef)!) expect(Math.abs(x.cents % 100)).toBe(0);
    }
    expect(
      habitBatch.labels.filter((l) => l.kinds.includes('invented_digits') && !l.kinds.includes('preparer_mill') && l.habits.includes('whole_units')),
    ).toEqual([]);
    // The idealised batch never plants inside a habit.
    expect(batch.labels.some((l) => l.kinds.includes('invented_recurring') || l.kinds.includes('invented_whole_units'))).toBe(false);
  });

  it('is deterministic for a seed, and a taxpayer without habits or plants gets exactly the idealised figures', () => {
    const again = generate({ seed: 'unit-habits', returns: 4000, plantShare: 0.06, habits: HABIT_SHARES });
    expect(fingerprint(again)).toBe(fingerprint(habitBatch));
    expect(again.answers).toEqual(habitBatch.answers);
    expect(fingerprint(generate({ seed: 'unit-habits-2', returns: 400, habits: HABIT_SHARES }))).not.toBe(
      fingerprint(generate({ seed: 'unit-habits', returns: 400, habits: HABIT_SHARES })),
    );
    const idealised = generate({ seed: 'unit-habits', returns: 4000, plantShare: 0.06 });
    const plain = new Set<string>();
    const touched = new Set(habitBatch.answers.filter((a) => a.habits.length || a.kinds.length).map((a) => a.tin));
    const touchedIdeal = new Set(idealised.answers.filter((a) => a.kinds.length).map((a) => a.tin));
    for (const a of habitBatch.answers) if (!touched.has(a.tin) && !touchedIdeal.has(a.tin)) plain.add(a.returnRef);
    expect(plain.size).toBeGreaterThan(400);
    const pick = (b: GeneratedBatch) => JSON.stringify([b.returns.filter((r) => plain.has(r.return_ref)), b.lineItems.filter((l) => plain.has(l.return_ref))]);
    expect(pick(habitBatch)).toBe(pick(idealised));
  });

  it('reads --habit-share text: names, short forms, off, and clear errors', () => {
    expect(parseHabitShares('off')).toEqual(NO_HABITS);
    expect(parseHabitShares('on')).toEqual(DEFAULT_HABIT_SHARES);
    expect(parseHabitShares('whole-units=0.5,recurring=0.1,zero_tax_refund=0')).toEqual({
      ...DEFAULT_HABIT_SHARES,
      whole_units: 0.5,
      recurring_bills: 0.1,
      zero_tax_refund: 0,
    });
    expect(parseHabitShares('gifts=1', NO_HABITS)).toEqual({ ...NO_HABITS, monthly_gifts: 1 });
    expect(() => parseHabitShares('cents=0.2')).toThrow(/unknown habit "cents".*whole_units/);
    expect(() => parseHabitShares('firm=1.5')).toThrow(/between 0 and 1/);
    expect(() => parseHabitShares('firm')).toThrow(/name=share/);
  });

  it("writes every return's planted kinds and habits to the answer files, apart from the batch", () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'plumbline-answers-'));
    try {
      const small = generate({ seed: 'unit-answers', returns: 200, plantShare: 0.1, habits: HABIT_SHARES });
      const files = writeAnswers(dir, { seed: 'unit-answers', returns: 200, plantShare: 0.1, habits: HABIT_SHARES }, small.answers);
      const json = JSON.parse(fs.readFileSync(files.json, 'utf8'));
      expect(json.returns).toHaveLength(200);
      expect(json.labels).toEqual(small.labels);
      expect(json.habitKinds).toEqual(HABIT_KINDS);
      const csvLines = fs.readFileSync(files.csv, 'utf8').trim().split('\n');
      expect(csvLines[0]).toBe('return_ref,tin,tax_year,preparer_id,planted_kinds,habits,detail,habit_detail');
      expect(csvLines).toHaveLength(201);
      const typicalWithHabit = small.answers.find((a) => !a.kinds.length && a.habits.length)!;
      expect(csvLines.find((l) => l.startsWith(typicalWithHabit.returnRef))).toContain(typicalWithHabit.habits.join(' '));
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});
