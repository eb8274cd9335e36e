/**
 * Corrected figures (shared/returns/corrections.ts) by Aldermere's invented rules
 * (shared/returns/line-codes.ts: allowance 12,000; 10 % of the first 40,000 of taxable,
 * 20 % of the next 60,000, 30 % above; refund = withheld − tax when positive). Each expected
 * figure is worked by hand below from those rules (math facts, no outside table).
 */
import { applyCorrections, CorrectionListSchema, CORRECTABLE_LINE_CODES } from '../../../shared/returns/corrections';

describe('applyCorrections', () => {
  it('wages 50,000 corrected to 60,000: tax 3,800 → 5,600, refund 200 → 0', () => {
    // As filed: income 50,000; taxable 50,000 − 12,000 = 38,000; tax 10 % = 3,800; refund 4,000 − 3,800 = 200.
    // As corrected: income 60,000; taxable 48,000; tax 4,000 + 20 % × 8,000 = 5,600; refund 0.
    const r = applyCorrections(
      [
        { code: 'inc.wages', cents: 3_000_000 },
        { code: 'inc.wages', cents: 2_000_000 },
        { code: 'tax.withheld', cents: 400_000 },
      ],
      [{ lineCode: 'inc.wages', amount: '60000' }],
    );
    expect(r.filed).toMatchObject({ income: 5_000_000, taxable: 3_800_000, tax: 380_000, refund: 20_000 });
    expect(r.corrected).toMatchObject({ income: 6_000_000, taxable: 4_800_000, tax: 560_000, refund: 0 });
    expect(r.taxDifference).toBe(180_000);
    expect(r.lines).toEqual([
      { code: 'inc.wages', label: 'Wages', filed: 5_000_000, corrected: 6_000_000, difference: 1_000_000, changed: true },
      { code: 'tax.withheld', label: 'Tax withheld', filed: 400_000, corrected: 400_000, difference: 0, changed: false },
    ]);
    expect(r.figures.find((f) => f.key === 'refund')).toEqual({ key: 'refund', label: 'Refund', filed: 20_000, corrected: 0, difference: -20_000 });
  });

  it('a deduction taken away and a new expense line: the tax can go down as well as up', () => {
    // As filed: receipts 80,000 − supplies 10,000 = 70,000; charity 3,000; taxable 70,000 − 3,000 − 12,000 = 55,000;
    //   tax 4,000 + 20 % × 15,000 = 7,000.
    // As corrected: charity 0, travel 20,000 (not filed): income 50,000; taxable 38,000; tax 3,800. Difference −3,200.
    const r = applyCorrections(
      [
        { code: 'inc.business.receipts', cents: 8_000_000 },
        { code: 'exp.business.supplies', cents: 1_000_000 },
        { code: 'ded.charity', cents: 300_000 },
      ],
      [
        { lineCode: 'ded.charity', amount: '0' },
        { lineCode: 'exp.business.travel', amount: '20000.00' },
      ],
    );
    expect(r.filed.tax).toBe(700_000);
    expect(r.corrected.tax).toBe(380_000);
    expect(r.taxDifference).toBe(-320_000);
    expect(r.lines.map((l) => [l.code, l.filed, l.corrected, l.changed])).toEqual([
      ['inc.business.receipts', 8_000_000, 8_000_000, false],
      ['exp.business.supplies', 1_000_000, 1_000_000, false],
      ['exp.business.travel', 0, 2_000_000, true],
      ['ded.charity', 300_000, 0, true],
    ]);
  });

  it('top bracket: taxable 150,000 → 4,000 + 12,000 + 30 % × 50,000 = 31,000', () => {
    const r = applyCorrections([{ code: 'inc.wages', cents: 100_000 }], [{ lineCode: 'inc.wages', amount: '162000.00' }]);
    expect(r.corrected.taxable).toBe(15_000_000);
    expect(r.corrected.tax).toBe(3_100_000);
    expect(r.filed.tax).toBe(0);
  });
});

describe('CorrectionListSchema', () => {
  it('refuses totals, the refund, bad amounts and a code given twice, each on its path', () => {
    expect(CORRECTABLE_LINE_CODES).not.toContain('tot.income');
    expect(CORRECTABLE_LINE_CODES).not.toContain('tax.refund');
    const r = CorrectionListSchema.safeParse([
      { lineCode: 'tot.income', amount: '1.00' },
      { lineCode: 'inc.wages', amount: '-5' },
      { lineCode: 'inc.interest', amount: '1.234' },
    ]);
    expect(r.success).toBe(false);
    expect([...new Set(r.error!.issues.map((i) => i.path.join('.')))]).toEqual(['0.lineCode', '1.amount', '2.amount']);
    // A code given twice (checked once every entry is valid on its own).
    const twice = CorrectionListSchema.safeParse([
      { lineCode: 'inc.interest', amount: '1.00' },
      { lineCode: 'inc.interest', amount: '2.00' },
    ]);
    expect(twice.error!.issues.map((i) => [i.path.join('.'), i.message])).toEqual([
      ['1.lineCode', "inc.interest is corrected twice; give each line's corrected amount once"],
    ]);
    expect(CorrectionListSchema.safeParse([]).success).toBe(false);
    expect(CorrectionListSchema.safeParse([{ lineCode: 'ded.medical', amount: '0' }]).success).toBe(true);
  });
});
