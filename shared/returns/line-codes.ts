/**
 * The line codes of Aldermere's income-tax return, what each means, how the totals are
 * formed, and the office's (invented) tax rules as pure functions on integer cents
 * (docs/design.md#line-codes-and-tax-rules). Intake, scoring, the case screen and the
 * demo generator all read this one list.
 *
 * Aldermere's rules (invented for the product, not any real jurisdiction's):
 *   tot.income     = inc.wages + inc.interest + inc.business.receipts − every exp.business.*
 *   tot.deductions = ded.charity + ded.medical
 *   taxable        = max(0, tot.income − tot.deductions − 12,000)
 *   tax            = 10 % of the first 40,000 of taxable, 20 % of the next 60,000, 30 % above
 *   tax.refund     = max(0, tax.withheld − tax)
 * A code may repeat within a return for itemised entries (each employer, expense, gift or
 * bill); the line's value is their sum. Totals (`tot.*`) and the refund are single lines.
 */

/** What part of the return a line belongs to. */
export type LineGroup = 'income' | 'expense' | 'deduction' | 'total' | 'tax';

/** One line code's definition. */
export interface LineCodeDef {
  code: string;
  group: LineGroup;
  /** Short label for screens. */
  label: string;
  /** What the line holds, in the words the return's instructions use. */
  meaning: string;
  /** May appear several times in one return (itemised entries, summed). */
  repeatable: boolean;
  /** A negative amount is allowed (only a total income can be a loss). */
  negativeAllowed: boolean;
}

/** Every line code, in the order the return form lists them. */
export const LINE_CODE_LIST = [
  {
    code: 'inc.wages',
    group: 'income',
    label: 'Wages',
    meaning: 'Pay from employment before tax; one entry per employer.',
    repeatable: true,
    negativeAllowed: false,
  },
  {
    code: 'inc.interest',
    group: 'income',
    label: 'Interest',
    meaning: 'Interest received from banks and lenders; one entry per payer.',
    repeatable: true,
    negativeAllowed: false,
  },
  {
    code: 'inc.business.receipts',
    group: 'income',
    label: 'Business receipts',
    meaning: 'Gross receipts of a business or self-employment; one entry per period or invoice.',
    repeatable: true,
    negativeAllowed: false,
  },
  {
    code: 'exp.business.supplies',
    group: 'expense',
    label: 'Supplies',
    meaning: 'Goods and materials bought for the business; one entry per purchase.',
    repeatable: true,
    negativeAllowed: false,
  },
  {
    code: 'exp.business.vehicle',
    group: 'expense',
    label: 'Vehicle',
    meaning: 'Business share of vehicle costs (fuel, repairs, leasing); one entry per bill.',
    repeatable: true,
    negativeAllowed: false,
  },
  {
    code: 'exp.business.travel',
    group: 'expense',
    label: 'Travel',
    meaning: 'Business travel (fares, lodging); one entry per trip or bill.',
    repeatable: true,
    negativeAllowed: false,
  },
  {
    code: 'exp.business.other',
    group: 'expense',
    label: 'Other business costs',
    meaning: 'Any other cost of earning business receipts (rent, fees, insurance); one entry per bill.',
    repeatable: true,
    negativeAllowed: false,
  },
  {
    code: 'ded.charity',
    group: 'deduction',
    label: 'Charitable gifts',
    meaning: 'Gifts to registered charities; one entry per gift.',
    repeatable: true,
    negativeAllowed: false,
  },
  {
    code: 'ded.medical',
    group: 'deduction',
    label: 'Medical costs',
    meaning: 'Medical bills paid and not reimbursed; one entry per bill.',
    repeatable: true,
    negativeAllowed: false,
  },
  {
    code: 'tot.income',
    group: 'total',
    label: 'Total income',
    meaning: 'Reported total: wages + interest + business receipts − business expenses. Negative for a business loss.',
    repeatable: false,
    negativeAllowed: true,
  },
  {
    code: 'tot.deductions',
    group: 'total',
    label: 'Total deductions',
    meaning: 'Reported total: charitable gifts + medical costs.',
    repeatable: false,
    negativeAllowed: false,
  },
  {
    code: 'tax.withheld',
    group: 'tax',
    label: 'Tax withheld',
    meaning: 'Tax already withheld by employers or banks; one entry per payer.',
    repeatable: true,
    negativeAllowed: false,
  },
  {
    code: 'tax.refund',
    group: 'tax',
    label: 'Refund claimed',
    meaning: 'Refund the taxpayer claims: tax withheld − tax due, when positive.',
    repeatable: false,
    negativeAllowed: false,
  },
] as const satisfies readonly LineCodeDef[];

/** A line code as a type: 'inc.wages' | … */
export type LineCode = (typeof LINE_CODE_LIST)[number]['code'];

/** The codes alone, in form order (for zod enums and menus). */
export const LINE_CODES = LINE_CODE_LIST.map((d) => d.code) as [LineCode, ...LineCode[]];

/** Lookup by code. */
export const LINE_CODE_DEFS: Readonly<Record<LineCode, LineCodeDef>> = Object.fromEntries(LINE_CODE_LIST.map((d) => [d.code, d])) as Record<
  LineCode,
  LineCodeDef
>;

/** Position of each code in {@link LINE_CODES}; lets hot loops keep per-code sums in arrays. */
export const LINE_CODE_INDEX: Readonly<Record<LineCode, number>> = Object.fromEntries(LINE_CODES.map((c, i) => [c, i])) as Record<LineCode, number>;

/** Activity codes of a taxpayer's main activity (docs/design.md#line-codes-and-tax-rules). */
export const ACTIVITY_CODES = [
  'none',
  'retail',
  'food-service',
  'construction',
  'personal-care',
  'consulting',
  'transport',
  'rental',
  'farming',
  'other',
] as const;
export type ActivityCode = (typeof ACTIVITY_CODES)[number];

/** The default cash-heavy list (a scoring-profile setting; this is its starting value). */
export const DEFAULT_CASH_HEAVY_ACTIVITIES: readonly ActivityCode[] = ['retail', 'food-service', 'personal-care', 'construction'];

/** Kinds of third-party statement and the income line each is matched against. */
export const STATEMENT_KINDS = ['wages', 'interest', 'sales'] as const;
export type StatementKind = (typeof STATEMENT_KINDS)[number];
export const STATEMENT_KIND_LINE: Readonly<Record<StatementKind, LineCode>> = {
  wages: 'inc.wages',
  interest: 'inc.interest',
  sales: 'inc.business.receipts',
};

/** Aldermere's (invented) tax parameters, in cents. */
export const ALDERMERE_TAX = {
  /** Personal allowance taken off before tax: 12,000. */
  allowanceCents: 1_200_000,
  /** Brackets from the bottom up; `rateTenths` is the rate in tenths (1 = 10 %, 3 = 30 %). */
  brackets: [
    { widthCents: 4_000_000, rateTenths: 1 },
    { widthCents: 6_000_000, rateTenths: 2 },
    { widthCents: Infinity, rateTenths: 3 },
  ],
} as const;

/**
 * The office's (invented) thresholds that matter for behaviour at their edge: single
 * expenses of 2,500 or more need a receipt on request, and cash receipts of 10,000 or more
 * must be reported by the payer. Scoring looks for amounts bunched just under them.
 */
export const ALDERMERE_THRESHOLDS = {
  receiptRequiredCents: 250_000,
  cashReportCents: 1_000_000,
} as const;

/**
 * Tax on a taxable amount: 10 % of the first 40,000, 20 % of the next 60,000, 30 % above,
 * rounded half up to the cent once at the end.
 *
 * @param taxableCents taxable income in cents (negative counts as 0)
 * @returns tax in cents
 */
export function computeTax(taxableCents: number): number {
  let rest = Math.max(0, taxableCents);
  let tenths = 0; // tax × 10, in cents: exact integer arithmetic
  for (const b of ALDERMERE_TAX.brackets) {
    const part = Math.min(rest, b.widthCents);
    tenths += part * b.rateTenths;
    rest -= part;
    if (rest <= 0) break;
  }
  return Math.floor((tenths + 5) / 10);
}

/** One line as the rules see it. */
export interface CentsLine {
  code: LineCode;
  cents: number;
}

/** Per-code sums of one return, in cents. */
export type LineSums = Record<LineCode, number>;

/** An empty {@link LineSums}. */
export function emptySums(): LineSums {
  return Object.fromEntries(LINE_CODES.map((c) => [c, 0])) as LineSums;
}

/** Everything the rules say about one return, beside what the return itself reported. */
export interface ReturnTotals {
  wages: number;
  interest: number;
  receipts: number;
  businessExpenses: number;
  /** Recomputed total income (may be negative: a business loss). */
  income: number;
  charity: number;
  medical: number;
  /** Recomputed total deductions. */
  deductions: number;
  taxable: number;
  tax: number;
  withheld: number;
  /** Refund the rules give. */
  refund: number;
  /** What the return reported on its `tot.*` and `tax.refund` lines; null when the line is absent. */
  reported: { income: number | null; deductions: number | null; refund: number | null };
}

/**
 * Applies Aldermere's rules to a return's per-code sums.
 *
 * @param sums per-code sums in cents (itemised entries already added up)
 * @param present which codes appeared at all, so a missing total reads as null, not 0
 */
export function totalsFromSums(sums: LineSums, present: ReadonlySet<LineCode> | ((code: LineCode) => boolean)): ReturnTotals {
  const has = typeof present === 'function' ? present : (c: LineCode) => present.has(c);
  const businessExpenses = sums['exp.business.supplies'] + sums['exp.business.vehicle'] + sums['exp.business.travel'] + sums['exp.business.other'];
  const income = sums['inc.wages'] + sums['inc.interest'] + sums['inc.business.receipts'] - businessExpenses;
  const deductions = sums['ded.charity'] + sums['ded.medical'];
  const taxable = Math.max(0, income - deductions - ALDERMERE_TAX.allowanceCents);
  const tax = computeTax(taxable);
  const withheld = sums['tax.withheld'];
  return {
    wages: sums['inc.wages'],
    interest: sums['inc.interest'],
    receipts: sums['inc.business.receipts'],
    businessExpenses,
    income,
    charity: sums['ded.charity'],
    medical: sums['ded.medical'],
    deductions,
    taxable,
    tax,
    withheld,
    refund: Math.max(0, withheld - tax),
    reported: {
      income: has('tot.income') ? sums['tot.income'] : null,
      deductions: has('tot.deductions') ? sums['tot.deductions'] : null,
      refund: has('tax.refund') ? sums['tax.refund'] : null,
    },
  };
}

/**
 * Applies Aldermere's rules to a return's lines (repeated codes are summed).
 *
 * @example
 * computeTotals([{ code: 'inc.wages', cents: 5_000_000 }, { code: 'tax.withheld', cents: 400_000 }])
 * // income 50,000 → taxable 38,000 → tax 3,800 → refund 200
 */
export function computeTotals(lines: readonly CentsLine[]): ReturnTotals {
  const sums = emptySums();
  const present = new Set<LineCode>();
  for (const l of lines) {
    sums[l.code] += l.cents;
    present.add(l.code);
  }
  return totalsFromSums(sums, present);
}
