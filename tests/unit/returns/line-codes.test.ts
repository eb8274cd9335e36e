/**
 * Aldermere's tax rules on integer cents. These are invented rules (docs/design.md#line-codes-and-tax-rules), so the
 * expected figures are worked out by hand here from that text, not taken from any real law.
 */
import { ALDERMERE_TAX, computeTax, computeTotals, LINE_CODE_LIST, LINE_CODES, type CentsLine } from '../../../shared/returns/line-codes';

const u = (units: number) => Math.round(units * 100); // units → cents

describe('computeTax (invented rules, docs/design.md#line-codes-and-tax-rules)', () => {
  it.each([
    ['nothing taxable', 0, 0],
    ['a negative amount counts as nothing', -500_00, 0],
    ['10 % of 38,000', u(38_000), u(3_800)],
    ['exactly the first bracket: 10 % of 40,000', u(40_000), u(4_000)],
    ['into the second: 4,000 + 20 % of 60,000', u(100_000), u(16_000)],
    ['into the third: 16,000 + 30 % of 50,000', u(150_000), u(31_000)],
    ['one cent into the 20 % bracket adds 0.2 cent, rounded away', u(40_000) + 1, u(4_000)],
  ])('%s', (_what, taxable, tax) => {
    expect(computeTax(taxable)).toBe(tax);
  });

  it('rounds half a cent up, once at the end', () => {
    expect(computeTax(5)).toBe(1); // 10 % of 0.05 = 0.005 → 0.01
    expect(computeTax(4)).toBe(0); // 0.004 → 0.00
    expect(computeTax(15)).toBe(2); // 0.015 → 0.02
  });

  it('uses the published parameters', () => {
    expect(ALDERMERE_TAX.allowanceCents).toBe(u(12_000));
    expect(ALDERMERE_TAX.brackets.map((b) => b.rateTenths)).toEqual([1, 2, 3]);
  });
});

describe('computeTotals (invented rules, docs/design.md#line-codes-and-tax-rules)', () => {
  it('a wage earner: 50,000 wages, 4,000 withheld → taxable 38,000, tax 3,800, refund 200', () => {
    const t = computeTotals([
      { code: 'inc.wages', cents: u(50_000) },
      { code: 'tax.withheld', cents: u(4_000) },
    ]);
    expect(t).toMatchObject({ income: u(50_000), deductions: 0, taxable: u(38_000), tax: u(3_800), withheld: u(4_000), refund: u(200) });
  });

  it('a business with itemised expenses and deductions: repeated codes are summed', () => {
    const lines: CentsLine[] = [
      { code: 'inc.business.receipts', cents: u(30_000) },
      { code: 'inc.business.receipts', cents: u(50_000) },
      { code: 'exp.business.supplies', cents: u(20_000) },
      { code: 'exp.business.supplies', cents: u(5_000) },
      { code: 'exp.business.vehicle', cents: u(3_000) },
      { code: 'ded.charity', cents: u(1_000) },
      { code: 'ded.medical', cents: u(2_500) },
      { code: 'tot.income', cents: u(52_000) },
      { code: 'tot.deductions', cents: u(3_500) },
    ];
    const t = computeTotals(lines);
    // income 80,000 − 28,000 = 52,000; deductions 3,500; taxable 52,000 − 3,500 − 12,000 = 36,500
    expect(t).toMatchObject({
      receipts: u(80_000),
      businessExpenses: u(28_000),
      income: u(52_000),
      deductions: u(3_500),
      taxable: u(36_500),
      tax: u(3_650),
      refund: 0,
    });
    expect(t.reported).toEqual({ income: u(52_000), deductions: u(3_500), refund: null });
  });

  it('a business loss gives no tax and refunds all that was withheld', () => {
    const t = computeTotals([
      { code: 'inc.business.receipts', cents: u(10_000) },
      { code: 'exp.business.other', cents: u(25_000) },
      { code: 'inc.interest', cents: u(120.5) },
      { code: 'tax.withheld', cents: u(500) },
      { code: 'tot.income', cents: u(-14_879.5) },
    ]);
    expect(t.income).toBe(u(-14_879.5));
    expect(t.taxable).toBe(0);
    expect(t.tax).toBe(0);
    expect(t.refund).toBe(u(500));
    expect(t.reported.income).toBe(u(-14_879.5));
  });

  it('reports a missing total as null, a total of zero as 0', () => {
    expect(computeTotals([{ code: 'inc.wages', cents: 100 }]).reported).toEqual({ income: null, deductions: null, refund: null });
    expect(computeTotals([{ code: 'tax.refund', cents: 0 }]).reported.refund).toBe(0);
  });
});

describe('the line-code list', () => {
  it('has every code docs/design.md#line-codes-and-tax-rules names, each with a meaning', () => {
    const required = [
      'inc.wages',
      'inc.interest',
      'inc.business.receipts',
      'exp.business.supplies',
      'exp.business.vehicle',
      'exp.business.travel',
      'exp.business.other',
      'ded.charity',
      'ded.medical',
      'tot.income',
      'tot.deductions',
      'tax.withheld',
      'tax.refund',
    ];
    expect([...LINE_CODES].sort()).toEqual([...required].sort());
    for (const d of LINE_CODE_LIST) expect(d.meaning.length).toBeGreaterThan(20);
  });

  it('lets only totals and the refund be single lines, and only total income be negative', () => {
    expect(LINE_CODE_LIST.filter((d) => !d.repeatable).map((d) => d.code)).toEqual(['tot.income', 'tot.deductions', 'tax.refund']);
    expect(LINE_CODE_LIST.filter((d) => d.negativeAllowed).map((d) => d.code)).toEqual(['tot.income']);
  });
});
