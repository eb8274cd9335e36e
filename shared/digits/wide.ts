/**
 * Amounts of any size: digits from the decimal text (docs/methods.md#which-amounts-each-test-takes).
 *
 * Ordinary amounts (below 10^13 currency units) take the integer-cents fast path of parse.ts
 * and counter.ts. An amount at or above that, or one written in scientific notation as
 * spreadsheets write large values (1.2E+15), is read here from its text into the decimal
 * digits of its whole number of cents, kept as a string: the digit tests need only the
 * leading two and the whole-unit tens and units, all of which are read off the string, so no
 * size limit applies beyond {@link MAX_WIDE_DIGITS}. A value written in scientific notation
 * that is small enough for the fast path is returned as ordinary cents.
 */

import { AMOUNT_LIMIT, AmountParseError, MAX_ABS_CENTS, centsFromNumber, parseCents, type AmountUnit } from './parse';
import { centsFromDecimal } from '../returns/money';

const { abs, round } = Math;

/** An amount beyond the integer-cents path: sign and the decimal digits of |cents|. */
export interface WideAmount {
  /** True for a negative amount. */
  negative: boolean;
  /** Decimal digits of the absolute number of cents, no leading zero, at least 16 digits. */
  digits: string;
}

/** Most digits an amount may have before the point (10^1000 and beyond are not figures). */
export const MAX_WIDE_DIGITS = 1000;

/** Amounts read from a column: ordinary ones as cents, the rest as digit strings. */
export interface AmountColumn {
  /** Signed integer cents of the ordinary amounts (|c| <= MAX_ABS_CENTS), in input order. */
  cents: Float64Array;
  /** The amounts too large for cents, in input order. */
  wide: WideAmount[];
}

/** What to tell a person about the accepted forms. */
export const AMOUNT_FORMS =
  'write digits with an optional minus sign and at most 2 decimals after a point (e.g. -1234.50), or scientific notation such as 1.2E+15';

const WIDE_RE = /^(-?)(\d+)(?:\.(\d+))?(?:[eE]([+-]?\d+))?$/;

/**
 * Read decimal text of any size, or in scientific notation, as cents or a wide amount.
 *
 * @param s the text (already trimmed by the caller where that is the rule)
 * @param position where it was, for the error message
 * @returns signed integer cents (ordinary) or a {@link WideAmount}
 * @throws AmountParseError when the text is not an amount
 */
export function amountFromText(s: string, position: string): number | WideAmount {
  const c = centsFromDecimal(s, MAX_ABS_CENTS);
  if (c === c) return c; // the fast path took it
  const m = WIDE_RE.exec(s);
  if (m === null) throw textError(s, position);
  const negative = m[1] === '-';
  const whole = m[2];
  const frac = m[3] ?? '';
  const exp = m[4] === undefined ? 0 : Number(m[4]);
  if (!Number.isSafeInteger(exp) || abs(exp) > 10 * MAX_WIDE_DIGITS) throw tooLong(s, position);
  const all = whole + frac;
  // Position of the cents' decimal point within `all`: whole digits, the exponent, 2 decimals.
  const point = whole.length + exp + 2;
  let digits: string;
  if (point >= all.length) {
    if (point - all.length > MAX_WIDE_DIGITS + 2) throw tooLong(s, position);
    digits = all + '0'.repeat(point - all.length);
  } else {
    const rest = all.slice(Math.max(point, 0));
    if (!/^0*$/.test(rest)) throw new AmountParseError(s, position, 'has more than 2 decimals');
    digits = point > 0 ? all.slice(0, point) : '';
  }
  digits = digits.replace(/^0+/, '');
  if (digits.length > MAX_WIDE_DIGITS + 2) throw tooLong(s, position);
  if (digits.length <= 15) {
    const cents = digits === '' ? 0 : Number(digits);
    return negative && cents !== 0 ? -cents : cents;
  }
  return { negative, digits };
}

/**
 * Read a number or text as an amount of any size (numbers as their shortest decimal text).
 *
 * @param value a number or a string
 * @param position where it was, for the error message
 * @returns signed integer cents (ordinary) or a {@link WideAmount}
 * @throws AmountParseError when the value is not an amount
 */
export function amountFromValue(value: unknown, position: string): number | WideAmount {
  if (typeof value === 'number') {
    // Below 10^13 (or not finite) the cents path decides, with the number's own message.
    if (!Number.isFinite(value) || abs(value) < AMOUNT_LIMIT) return centsFromNumber(value, position);
    return amountFromText(String(value), position);
  }
  if (typeof value === 'string') return amountFromText(value, position);
  throw new AmountParseError(
    value,
    position,
    `is ${value === null ? 'null' : value === undefined ? 'missing' : `a ${typeof value}`}, not a number or a decimal string`,
  );
}

/** Collects amounts of any size into an {@link AmountColumn} (files are read as streams). */
export class AmountColumnBuilder {
  private data = new Float64Array(1024);
  private len = 0;
  /** Wide amounts so far. */
  readonly wide: WideAmount[] = [];

  /** Amounts taken so far, both kinds. */
  get length(): number {
    return this.len + this.wide.length;
  }

  /** Number of ordinary amounts so far (the index the next one will take). */
  get centsLength(): number {
    return this.len;
  }

  /**
   * Add one amount.
   * @returns 'cents' or 'wide': which list it went to
   */
  push(a: number | WideAmount): 'cents' | 'wide' {
    if (typeof a !== 'number') {
      this.wide.push(a);
      return 'wide';
    }
    if (this.len === this.data.length) {
      const bigger = new Float64Array(this.data.length * 2);
      bigger.set(this.data);
      this.data = bigger;
    }
    this.data[this.len++] = a;
    return 'cents';
  }

  /** The column read. */
  column(): AmountColumn {
    return { cents: this.data.subarray(0, this.len), wide: this.wide };
  }
}

/** Options of {@link parseAmountColumn}. */
export interface ParseColumnOptions {
  /** 'amount' (default): numbers or decimal text of any size; 'cents': integer cents (parse.ts). */
  unit?: AmountUnit;
  /** Names value i in error messages; default `index ${i}`. */
  positionOf?: (index: number) => string;
}

/**
 * Read a list of amounts of any size.
 *
 * @param values numbers or decimal strings (plain or scientific notation)
 * @param options how to name positions in error messages
 * @returns the ordinary amounts as cents and the rest as digit strings
 * @throws AmountParseError at the first value that is not an amount
 */
export function parseAmountColumn(values: ArrayLike<unknown>, options: ParseColumnOptions = {}): AmountColumn {
  const positionOf = options.positionOf ?? defaultPosition;
  const n = values.length;
  const out = new Float64Array(n);
  const wide: WideAmount[] = [];
  const j = readAmountsInto(values, 0, n, out, wide, positionOf);
  return { cents: j === n ? out : out.subarray(0, j), wide };
}

/** `index ${i}`: the position of a value of a list in error messages. */
export function defaultPosition(i: number): string {
  return `index ${i}`;
}

/**
 * The reading loop of {@link parseAmountColumn}, for a block of a list: the profile reads
 * a long list a block at a time, so that no array of every amount's cents is needed.
 *
 * @param values numbers or decimal strings (plain or scientific notation)
 * @param from first index
 * @param to end index, exclusive
 * @param out receives the cents of the ordinary amounts, in order, from index 0
 * @param wide receives the amounts too large for cents, in order
 * @param positionOf names value i in error messages
 * @returns how many cents were written to `out`
 * @throws AmountParseError at the first value that is not an amount
 */
export function readAmountsInto(
  values: ArrayLike<unknown>,
  from: number,
  to: number,
  out: Float64Array,
  wide: WideAmount[],
  positionOf: (index: number) => string,
): number {
  // Imported bindings as locals: module loaders (tsx, jest) compile them to getter calls.
  const decimalCents = centsFromDecimal;
  const maxCents = MAX_ABS_CENTS;
  const limit = AMOUNT_LIMIT;
  let j = 0;
  for (let i = from; i < to; i++) {
    const v = values[i];
    // Inline fast path for ordinary numbers and decimal strings (as parse.ts parseAmounts).
    if (typeof v === 'number') {
      const a = abs(v);
      if (a < limit) {
        const c = round(a * 100);
        if (c / 100 === a) {
          out[j++] = v < 0 ? -c : c;
          continue;
        }
      }
    } else if (typeof v === 'string') {
      const c = decimalCents(v, maxCents);
      if (c === c) {
        out[j++] = c;
        continue;
      }
    }
    const a = amountFromValue(v, positionOf(i));
    if (typeof a === 'number') out[j++] = a;
    else wide.push(a);
  }
  return j;
}

/** One problem found by {@link findAmountErrors}. */
export interface AmountProblem {
  /** 0-based index of the value. */
  index: number;
  /** The full message, naming the value and its position. */
  message: string;
}

/**
 * Check every value and list the problems (for a 422 answer that names them all). Amounts of
 * any size are accepted (wide.ts): only a value that is not an amount is a problem.
 *
 * @param values the amounts
 * @param options unit, and `max`: stop after this many problems (default 100)
 * @returns the problems found, in input order; empty when all values are amounts
 */
export function findAmountErrors(values: ArrayLike<unknown>, options: { unit?: AmountUnit; max?: number } = {}): AmountProblem[] {
  const max = options.max ?? 100;
  const problems: AmountProblem[] = [];
  for (let i = 0; i < values.length && problems.length < max; i++) {
    try {
      if (options.unit === 'cents') parseCents(values[i], `index ${i}`);
      else amountFromValue(values[i], `index ${i}`);
    } catch (e) {
      if (!(e instanceof AmountParseError)) throw e;
      problems.push({ index: i, message: e.message });
    }
  }
  return problems;
}

/** The amount as decimal text with 2 decimals ("-1234.50"). */
export function formatWide(w: WideAmount): string {
  const d = w.digits;
  return `${w.negative ? '-' : ''}${d.slice(0, -2)}.${d.slice(-2)}`;
}

function tooLong(s: string, position: string): AmountParseError {
  return new AmountParseError(s, position, `is too large: at most ${MAX_WIDE_DIGITS.toLocaleString('en-US')} digits before the point`);
}

/** The clearest message for text that is no amount at all. */
function textError(s: string, position: string): AmountParseError {
  if (s.length === 0) return new AmountParseError(s, position, 'is empty');
  if (s.trim() === '') return new AmountParseError(s, position, 'is blank');
  if (/\s/.test(s)) return new AmountParseError(s, position, `contains spaces; ${AMOUNT_FORMS}`);
  if (s.includes(',')) {
    return new AmountParseError(s, position, 'contains a comma; use a point as the decimal separator and no thousands separators, e.g. 1234.50');
  }
  return new AmountParseError(s, position, `is not a valid amount: ${AMOUNT_FORMS}`);
}
