/**
 * Amounts in, integer cents out.
 *
 * Digits are taken from the decimal text of an amount, never from floating-point
 * logarithms (docs/methods.md#which-amounts-each-test-takes). Every amount is turned
 * once into a signed integer number of cents; the digit engine reads the digits from that integer with exact integer
 * arithmetic. Accepted inputs:
 *  - a JavaScript number, read through its shortest decimal text (what `String(n)` prints);
 *    that text must be a plain decimal with at most 2 decimals (so 0.1 + 0.2, which prints
 *    as 0.30000000000000004, is rejected, and so is 1e21, which prints in exponent form);
 *  - a decimal string: an optional minus sign, digits, and optionally a point followed by
 *    1 or 2 digits (no plus sign, spaces, commas, exponents or currency signs);
 *  - with `unit: 'cents'`: integer cents as a safe-integer number, a bigint or a string of
 *    digits with an optional minus sign.
 * Anything else throws an {@link AmountParseError} naming the value and its position.
 * These are the integer-cents fast path; amounts of any size and scientific notation are
 * read by wide.ts, which falls back from here.
 */

import { centsFromDecimal } from '../returns/money';

// Math functions bound once: a global `Math` lookup in a hot loop is slow under jest's vm
// sandbox (about 150 ns a call), and the local binding costs nothing under plain node.
const { abs, round } = Math;

/**
 * Largest absolute amount accepted, in cents: amounts must be below 10^13 currency units.
 * Why: cents then stay below 10^15 < 2^53, so every integer step is exact in a double and
 * twice the cents (the sort key, see profile.ts) is exact too. The database keeps amounts
 * as numeric(14,2), i.e. below 10^12 (docs/design.md#data-model), well inside this range.
 */
export const MAX_ABS_CENTS = 1e15 - 1;

/** The smallest absolute amount, in currency units, that is out of range (10^13). */
export const AMOUNT_LIMIT = 1e13;

/** How the values given to {@link parseAmounts} are to be read. */
export type AmountUnit = 'amount' | 'cents';

/** An amount that could not be read, with the value and where it was. */
export class AmountParseError extends Error {
  /** Where the value was, as given by the caller (e.g. "index 4", "line 7"). */
  readonly position: string;
  /** The offending value as received. */
  readonly value: unknown;

  /**
   * @param value the value that was rejected
   * @param position where it was, e.g. "index 4"
   * @param problem what is wrong with it, as a sentence fragment
   */
  constructor(value: unknown, position: string, problem: string) {
    super(`Amount at ${position} (${showValue(value)}) ${problem}`);
    this.name = 'AmountParseError';
    this.position = position;
    this.value = value;
  }
}

/** Show a rejected value in a message: strings quoted, numbers as JavaScript prints them. */
export function showValue(value: unknown): string {
  if (typeof value === 'string') {
    const cut = value.length > 40 ? `${value.slice(0, 40)}…` : value;
    return JSON.stringify(cut);
  }
  if (typeof value === 'bigint') return `${value}n`;
  if (value === null) return 'null';
  if (value === undefined) return 'undefined';
  if (typeof value === 'number' || typeof value === 'boolean') return String(value);
  if (value instanceof Date) return `date ${value.toISOString()}`;
  if (Array.isArray(value)) return 'an array';
  return typeof value === 'object' ? 'an object' : typeof value;
}

const SYNTAX_HELP = 'is not a valid amount: write digits with an optional minus sign and at most 2 decimals after a point, e.g. -1234.50';

/**
 * Read one amount as signed integer cents.
 *
 * @param value a number, or a decimal string (see the module comment)
 * @param position where the value was, for the error message (default "index 0")
 * @returns the amount in cents, an integer with |cents| <= {@link MAX_ABS_CENTS}; 0 for -0
 * @throws AmountParseError when the value is not an accepted amount
 */
export function parseAmount(value: unknown, position = 'index 0'): number {
  if (typeof value === 'number') return centsFromNumber(value, position);
  if (typeof value === 'string') return centsFromString(value, position);
  throw new AmountParseError(value, position, `is ${kindOf(value)}, not a number or a decimal string`);
}

/**
 * Read a JavaScript number as cents.
 *
 * Fast path, equivalent to checking `String(n)` against /^-?\d+(\.\d{1,2})?$/ for every
 * |n| < 10^13: if c = round(|n| * 100) and c / 100 === |n|, then |n| is the double nearest
 * to the decimal c/100, so its shortest round-trip text has at most 2 decimals; otherwise
 * it needs more (or exponent form, below 1e-6). A property test checks the equivalence
 * against the String() rule.
 *
 * @param n the number
 * @param position where it was, for the error message
 * @returns signed integer cents
 * @throws AmountParseError for NaN, infinities, exponent form, more than 2 decimals, out of range
 */
export function centsFromNumber(n: number, position: string): number {
  const a = abs(n); // also turns -0 into 0
  if (a < AMOUNT_LIMIT) {
    const c = round(a * 100);
    if (c / 100 === a) return n < 0 ? -c : c;
  }
  throw numberError(n, position);
}

function numberError(n: number, position: string): AmountParseError {
  if (Number.isNaN(n)) return new AmountParseError(n, position, 'is not a number');
  if (!Number.isFinite(n)) return new AmountParseError(n, position, 'is not a finite number');
  const text = String(n);
  if (text.includes('e')) {
    return new AmountParseError(n, position, 'is in exponent notation; amounts must be plain decimals with at most 2 decimals, below 10^13');
  }
  if (abs(n) >= AMOUNT_LIMIT) return rangeError(n, position);
  return new AmountParseError(n, position, 'has more than 2 decimals');
}

function rangeError(value: unknown, position: string): AmountParseError {
  return new AmountParseError(value, position, 'is out of range: the absolute amount must be below 10000000000000 (10^13)');
}

/**
 * Read a decimal string as cents: /^-?[0-9]+(\.[0-9]{1,2})?$/, below 10^13 in absolute value.
 * A hand-written scan rather than a regular expression: it is the hot path for text input.
 *
 * @param s the text
 * @param position where it was, for the error message
 * @returns signed integer cents
 * @throws AmountParseError naming what is wrong (comma, spaces, exponent, decimals, range)
 */
export function centsFromString(s: string, position: string): number {
  // The intake's scanner, with the digit engine's wider range.
  const c = centsFromDecimal(s, MAX_ABS_CENTS);
  if (c !== c) throw stringError(s, position); // NaN: not an accepted decimal
  return c;
}

/** Work out the clearest message for a string that failed the fast scan. */
function stringError(s: string, position: string): AmountParseError {
  if (s.length === 0) return new AmountParseError(s, position, 'is empty');
  if (s.trim() === '') return new AmountParseError(s, position, 'is blank');
  if (/\s/.test(s)) return new AmountParseError(s, position, `contains spaces; ${SYNTAX_HELP}`);
  if (s.includes(',')) {
    return new AmountParseError(s, position, 'contains a comma; use a point as the decimal separator and no thousands separators, e.g. 1234.50');
  }
  if (/^-?(\d+\.?\d*|\.\d+)[eE][+-]?\d+$/.test(s)) {
    return new AmountParseError(s, position, `is in exponent notation; ${SYNTAX_HELP}`);
  }
  if (/^-?\d+\.\d{3,}$/.test(s)) return new AmountParseError(s, position, 'has more than 2 decimals');
  if (/^-?\d+(\.\d{1,2})?$/.test(s)) return rangeError(s, position);
  return new AmountParseError(s, position, SYNTAX_HELP);
}

/**
 * Read integer cents given as a safe-integer number, a bigint or a string of digits.
 *
 * @param value the cents
 * @param position where it was, for the error message
 * @returns signed integer cents, |cents| <= {@link MAX_ABS_CENTS}
 * @throws AmountParseError when the value is not an integer number of cents in range
 */
export function parseCents(value: unknown, position = 'index 0'): number {
  let c: number;
  if (typeof value === 'number') {
    if (!Number.isInteger(value)) {
      throw new AmountParseError(value, position, 'is not a whole number of cents');
    }
    c = value;
  } else if (typeof value === 'bigint') {
    if (value > BigInt(MAX_ABS_CENTS) || value < -BigInt(MAX_ABS_CENTS)) {
      throw centsRangeError(value, position);
    }
    c = Number(value);
  } else if (typeof value === 'string') {
    if (!/^-?\d{1,16}$/.test(value)) {
      throw new AmountParseError(value, position, 'is not a whole number of cents (digits with an optional minus sign)');
    }
    c = Number(value);
  } else {
    throw new AmountParseError(value, position, `is ${kindOf(value)}, not a whole number of cents`);
  }
  if (c > MAX_ABS_CENTS || c < -MAX_ABS_CENTS) throw centsRangeError(value, position);
  return c === 0 ? 0 : c;
}

function centsRangeError(value: unknown, position: string): AmountParseError {
  return new AmountParseError(value, position, `is out of range: at most ${MAX_ABS_CENTS} cents in absolute value`);
}

/** Options of {@link parseAmounts}. */
export interface ParseAmountsOptions {
  /** 'amount' (default): numbers or decimal strings in currency units; 'cents': integer cents. */
  unit?: AmountUnit;
  /** Names the position of value i in error messages; default `index ${i}`. */
  positionOf?: (index: number) => string;
}

/**
 * Read a list of amounts as signed integer cents.
 *
 * @param values the amounts, see {@link parseAmount} (or {@link parseCents} with unit 'cents')
 * @param options unit and how to name positions in error messages
 * @returns a new Float64Array of signed integer cents, same order and length
 * @throws AmountParseError at the first value that cannot be read
 */
export function parseAmounts(values: ArrayLike<unknown>, options: ParseAmountsOptions = {}): Float64Array {
  const n = values.length;
  const out = new Float64Array(n);
  const positionOf = options.positionOf ?? ((i: number) => `index ${i}`);
  if (options.unit === 'cents') {
    for (let i = 0; i < n; i++) out[i] = parseCents(values[i], positionOf(i));
    return out;
  }
  for (let i = 0; i < n; i++) {
    const v = values[i];
    // Inline fast path for numbers (the common case); strings and errors go the long way.
    if (typeof v === 'number') {
      const a = abs(v);
      if (a < AMOUNT_LIMIT) {
        const c = round(a * 100);
        if (c / 100 === a) {
          out[i] = v < 0 ? -c : c;
          continue;
        }
      }
      throw numberError(v, positionOf(i));
    }
    if (typeof v === 'string') {
      const c = centsFromDecimal(v, MAX_ABS_CENTS);
      if (c !== c) throw stringError(v, positionOf(i));
      out[i] = c;
      continue;
    }
    out[i] = parseAmount(v, positionOf(i));
  }
  return out;
}

/** Signed integer cents as decimal text with 2 decimals ("-1234.50"): the intake's own formatter. */
export { formatCents } from '../returns/money';

function kindOf(value: unknown): string {
  if (value === null) return 'null';
  if (value === undefined) return 'missing';
  if (Array.isArray(value)) return 'an array';
  if (value instanceof Date) return 'a date';
  const t = typeof value;
  if (t === 'boolean') return 'a boolean';
  if (t === 'bigint') return 'a bigint';
  if (t === 'object') return 'an object';
  return `a ${t}`;
}
