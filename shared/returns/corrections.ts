/**
 * Corrected figures (issue 13): when an examination closes with an adjustment, the examiner
 * gives the corrected amount of each line that changes, by line code; the product works out
 * totals, taxable income, tax and refund again by Aldermere's rules (line-codes.ts), sets
 * the return as filed beside the return as corrected, and the difference in tax becomes the
 * case's adjusted amount (docs/design.md#line-codes-and-tax-rules).
 *
 * A correction replaces the line's value (the sum of its itemised entries) with the amount
 * given. Totals and the refund are worked out, never corrected by hand, so only the lines
 * the rules read can be corrected.
 */
import { z } from 'zod';
import { computeTotals, LINE_CODE_DEFS, LINE_CODE_LIST, type CentsLine, type LineCode, type ReturnTotals } from './line-codes';
import { money } from '../scoring/format';
import { centsFromDecimal } from './money';

/** Line codes an examiner may correct: every code the rules read (not the tot.* lines or the refund, which are worked out). */
export const CORRECTABLE_LINE_CODES = LINE_CODE_LIST.filter((d) => d.group !== 'total' && d.code !== 'tax.refund').map((d) => d.code) as [
  LineCode,
  ...LineCode[],
];

/** Most corrections one closing may carry (one per correctable code). */
export const MAX_CORRECTIONS = CORRECTABLE_LINE_CODES.length;

/** One corrected line: the code and the corrected amount as decimal text (0 or more, at most 2 decimals). */
export const CorrectionSchema = z.object({
  lineCode: z.enum(CORRECTABLE_LINE_CODES, {
    error: `Choose one of the lines that can be corrected: ${CORRECTABLE_LINE_CODES.join(', ')} (totals and the refund are worked out)`,
  }),
  amount: z
    .string()
    .trim()
    .regex(/^\d{1,10}(\.\d{1,2})?$/, 'Give the corrected amount as a number of 0 or more with at most 2 decimals, e.g. 1250.00')
    .refine((s) => !Number.isNaN(centsFromDecimal(s)), 'The amount is too large: at most 9999999999.99'),
});
export type Correction = z.infer<typeof CorrectionSchema>;

/** A list of corrections, each code at most once. */
export const CorrectionListSchema = z
  .array(CorrectionSchema)
  .min(1, 'Give at least one corrected figure')
  .max(MAX_CORRECTIONS, `Give at most ${MAX_CORRECTIONS} corrected figures, one per line`)
  .superRefine((list, ctx) => {
    const seen = new Set<string>();
    list.forEach((c, i) => {
      if (seen.has(c.lineCode))
        ctx.addIssue({ code: 'custom', path: [i, 'lineCode'], message: `${c.lineCode} is corrected twice; give each line's corrected amount once` });
      seen.add(c.lineCode);
    });
  });

/** One line of the side-by-side: the line's value as filed, as corrected, and the difference (cents). */
export interface ComparedLine {
  code: LineCode;
  label: string;
  filed: number;
  corrected: number;
  difference: number;
  /** True when the examiner gave a corrected amount for this line. */
  changed: boolean;
}

/** The return as filed and as corrected, by the same rules. */
export interface CorrectedReturn {
  filed: ReturnTotals;
  corrected: ReturnTotals;
  /** Every correctable line that appears in either version, in form order. */
  lines: ComparedLine[];
  /** Worked-out figures, as filed / as corrected / difference: total income, deductions, taxable, tax, withheld, refund. */
  figures: { key: 'income' | 'deductions' | 'taxable' | 'tax' | 'withheld' | 'refund'; label: string; filed: number; corrected: number; difference: number }[];
  /** Corrected tax minus tax as filed: the case's adjusted amount. Negative when the tax goes down. */
  taxDifference: number;
}

/** A difference with its sign, as the side-by-side shows it: "+1,800.00", "−250.00", "0.00". */
export function signedMoney(cents: number): string {
  return cents > 0 ? `+${money(cents)}` : money(cents);
}

const FIGURE_LABELS = {
  income: 'Total income',
  deductions: 'Total deductions',
  taxable: 'Taxable income',
  tax: 'Tax',
  withheld: 'Tax withheld',
  refund: 'Refund',
} as const;

/**
 * Applies corrections to a return's lines and works out both versions by the rules.
 *
 * @param filedLines the return's lines as filed (repeated codes are summed)
 * @param corrections already checked by {@link CorrectionListSchema}
 * @example
 * // Wages 50,000 with 4,000 withheld (tax 3,800, refund 200); wages corrected to 60,000:
 * // taxable 48,000, tax 4,000 + 1,600 = 5,600, refund 0; tax difference +1,800.
 * applyCorrections([{ code: 'inc.wages', cents: 5_000_000 }, { code: 'tax.withheld', cents: 400_000 }], [{ lineCode: 'inc.wages', amount: '60000' }]).taxDifference // 180_000
 */
export function applyCorrections(filedLines: readonly CentsLine[], corrections: readonly Correction[]): CorrectedReturn {
  const byCode = new Map<LineCode, number>();
  for (const c of corrections) byCode.set(c.lineCode, centsFromDecimal(c.amount));
  const sums = new Map<LineCode, number>();
  for (const l of filedLines) sums.set(l.code, (sums.get(l.code) ?? 0) + l.cents);
  // The corrected return: every filed line of an uncorrected code as it was, a corrected code as one line.
  const correctedLines: CentsLine[] = [...filedLines.filter((l) => !byCode.has(l.code)), ...[...byCode].map(([code, cents]) => ({ code, cents }))];
  const filed = computeTotals(filedLines);
  const corrected = computeTotals(correctedLines);
  const lines: ComparedLine[] = CORRECTABLE_LINE_CODES.filter((code) => sums.has(code) || byCode.has(code)).map((code) => {
    const f = sums.get(code) ?? 0;
    const c = byCode.has(code) ? byCode.get(code)! : f;
    return { code, label: LINE_CODE_DEFS[code].label, filed: f, corrected: c, difference: c - f, changed: byCode.has(code) };
  });
  const figures = (Object.keys(FIGURE_LABELS) as (keyof typeof FIGURE_LABELS)[]).map((key) => ({
    key,
    label: FIGURE_LABELS[key],
    filed: filed[key],
    corrected: corrected[key],
    difference: corrected[key] - filed[key],
  }));
  return { filed, corrected, lines, figures, taxDifference: corrected.tax - filed.tax };
}
