/**
 * Money as integer cents. Amounts in batch files are decimal text ("1234.5", "-80.00");
 * they are turned once into a signed integer number of cents and computed with exact
 * integer arithmetic (docs/design.md#data-model: money is never a float).
 *
 * Why plain numbers and not bigint: every amount a batch may hold is below
 * {@link MAX_LINE_AMOUNT_CENTS}, and a return holds at most {@link MAX_LINES_PER_RETURN}
 * lines, so every sum stays below 2^53 where a double counts cents exactly; bigint would
 * cost several times more on the hot path of a million-line batch.
 */

/** Largest absolute amount on one line: 9,999,999,999.99 (ten digits before the point). */
export const MAX_LINE_AMOUNT_CENTS = 999_999_999_999;

/** Most lines one return may hold (keeps every per-return sum exact, see the module comment). */
export const MAX_LINES_PER_RETURN = 5_000;

/** Why a decimal text was not accepted; `null` when it was. */
export type DecimalProblem = 'empty' | 'comma' | 'spaces' | 'currency' | 'exponent' | 'decimals' | 'range' | 'syntax';

/**
 * Reads strict decimal text (`-?digits(.d|.dd)?`) as integer cents, or NaN when the text is
 * not such a decimal or is out of range. A hand-written scan: it runs once per line item.
 *
 * @param s the text, already trimmed
 * @param maxCents largest absolute amount accepted (a batch line by default; the digit engine
 *   takes larger amounts, up to 10^15 − 1 cents)
 * @returns signed integer cents (0 for "-0"), or NaN
 */
export function centsFromDecimal(s: string, maxCents: number = MAX_LINE_AMOUNT_CENTS): number {
  const len = s.length;
  let i = 0;
  let negative = false;
  if (len > 0 && s.charCodeAt(0) === 45 /* - */) {
    negative = true;
    i = 1;
  }
  let whole = 0;
  let wholeDigits = 0;
  for (; i < len; i++) {
    const d = s.charCodeAt(i) - 48;
    if (d < 0 || d > 9) break;
    whole = whole * 10 + d;
    wholeDigits++;
    if (whole > 1e13) return NaN; // far out of range already; stop before doubles lose digits
  }
  if (wholeDigits === 0) return NaN;
  let cents = whole * 100;
  if (i < len) {
    const rest = len - i;
    if (s.charCodeAt(i) !== 46 /* . */ || rest < 2 || rest > 3) return NaN;
    const d1 = s.charCodeAt(i + 1) - 48;
    if (d1 < 0 || d1 > 9) return NaN;
    cents += d1 * 10;
    if (rest === 3) {
      const d2 = s.charCodeAt(i + 2) - 48;
      if (d2 < 0 || d2 > 9) return NaN;
      cents += d2;
    }
  }
  if (cents > maxCents) return NaN;
  return negative && cents !== 0 ? -cents : cents;
}

/**
 * Says why a text failed {@link centsFromDecimal}, so the error report can tell the clerk
 * how to fix it.
 */
export function decimalProblem(s: string): DecimalProblem | null {
  if (!Number.isNaN(centsFromDecimal(s))) return null;
  if (s.trim() === '') return 'empty';
  if (/^-?\d+(\.\d{1,2})?$/.test(s)) return 'range';
  if (/^-?\d+\.\d{3,}$/.test(s)) return 'decimals';
  if (/^-?(\d+\.?\d*|\.\d+)[eE][+-]?\d+$/.test(s)) return 'exponent';
  if (/[$€£¤]/.test(s)) return 'currency';
  if (s.includes(',')) return 'comma';
  if (/\s/.test(s)) return 'spaces';
  return 'syntax';
}

/** The clerk-facing sentence for each {@link DecimalProblem}. */
export const DECIMAL_PROBLEM_TEXT: Record<DecimalProblem, string> = {
  empty: 'is empty; enter the amount, e.g. 1234.50',
  comma: 'contains a comma; use a point for decimals and no thousands separators, e.g. 1234.50',
  spaces: 'contains spaces; write the amount as digits with an optional point, e.g. 1234.50',
  currency: 'contains a currency sign; write only the number, e.g. 1234.50',
  exponent: 'is in exponent notation (e.g. 1.2E+5); format the column as a plain number with 2 decimals',
  decimals: 'has more than 2 decimal places; round it to cents, e.g. 1234.57',
  range: 'is too large: amounts on one line must be at most 9999999999.99',
  syntax: 'is not an amount; write digits with an optional minus sign and at most 2 decimals, e.g. -1234.50',
};

/**
 * Canonical decimal text for cents: "-1234.05", "0.00". Used for COPY into numeric columns
 * and for showing amounts.
 */
export function formatCents(cents: number): string {
  const negative = cents < 0;
  const a = negative ? -cents : cents;
  const whole = Math.floor(a / 100);
  const frac = a - whole * 100;
  return `${negative ? '-' : ''}${whole}.${frac < 10 ? '0' : ''}${frac}`;
}

/**
 * Cents from a PostgreSQL numeric as the driver returns it (a decimal string). Exact for
 * values below 2^53 cents.
 */
export function centsFromNumeric(value: string | null): number | null {
  if (value === null) return null;
  const m = /^(-?)(\d+)(?:\.(\d{1,2}))?$/.exec(value);
  if (!m) throw new Error(`not a 2-decimal numeric: ${value}`);
  const c = Number(m[2]) * 100 + Number((m[3] ?? '').padEnd(2, '0'));
  return m[1] === '-' && c !== 0 ? -c : c;
}
