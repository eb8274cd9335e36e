/**
 * The hot path: digit counts from integer cents, without allocating per amount.
 *
 * Digits come from the integer number of cents c
 * (docs/methods.md#which-amounts-each-test-takes). The amount is c / 100, so the
 * significant digits of the amount are the decimal digits of c: 0.05 has c = 5 (first digit 5), 1234.5 has c = 123450 (digits 1, 2, ...).
 *  - first digit: every non-zero amount;
 *  - second digit, first two digits: amounts >= 10, i.e. c >= 1000;
 *  - last two digits: amounts >= 1,000 (c >= 100000), the last two digits of the whole-unit
 *    part, floor(c / 100) mod 100: only there are they past the second significant digit
 *    and uniform (for 100..999 the tens digit is the second significant digit, P(00) =
 *    0.01225; docs/methods.md#which-amounts-each-test-takes);
 *  - zero never counts. Each amount left out is tallied with its reason.
 * Exactness: for integers 0 < c < 2^53 and k <= 15, the double quotient c / 10^k is
 * correctly rounded and can never round up across an integer (the gap to the next integer
 * is at least 10^-k, more than half an ulp of the quotient), so floor(c / 10^k) is the
 * exact integer quotient. No logarithm is involved.
 *
 * Positive and negative amounts are counted apart (docs/methods.md#which-amounts-each-test-takes: analyse them separately);
 * the pooled counts are their sum.
 */

import { BIN_COUNT, type DigitTestName } from './expected';

// Math functions bound once: a global `Math` lookup in a hot loop is slow under jest's vm
// sandbox (about 150 ns a call), and the local binding costs nothing under plain node.
const { abs, floor, clz32 } = Math;

/** Powers of ten 10^0 .. 10^16, exact in doubles. */
export const POW10: Float64Array = Float64Array.from({ length: 17 }, (_, k) => 10 ** k);

/** Which amounts to read: both signs pooled, or one sign. */
export type SignSelection = 'all' | 'positive' | 'negative';

const TWO32 = 4294967296;

/**
 * Decimal digits of 2^(b-1), by bit length b = 1..32: an integer of bit length b has that
 * many digits or one more (2^b < 10 * 2^(b-1)), decided by one exact comparison.
 */
const DIGITS_BY_BITS: Uint8Array = Uint8Array.from({ length: 33 }, (_, b) => (b === 0 ? 0 : String(2 ** (b - 1)).length));

/**
 * Number of decimal digits of a positive integer c < 10^16, from its bit length (clz32)
 * and one comparison below 2^32, by comparisons above; no logarithm. Branch-free for the
 * common case, which matters: digit counts of amounts are random, so a comparison tree
 * mispredicts (measured 3.5 times slower on log-uniform amounts).
 *
 * @param c a positive integer
 * @returns the number of decimal digits (1 for 1..9)
 */
export function decimalDigitCount(c: number): number {
  if (c < TWO32) {
    const d = DIGITS_BY_BITS[32 - clz32(c)];
    return c >= POW10[d] ? d + 1 : d;
  }
  if (c < 1e12) {
    if (c < 1e10) return c < 1e9 ? 9 : 10;
    return c < 1e11 ? 11 : 12;
  }
  if (c < 1e14) return c < 1e13 ? 13 : 14;
  return c < 1e15 ? 15 : 16;
}

/**
 * The first two significant digits (10..99) of a positive integer c, as a two-digit
 * number; a one-digit c gives c * 10 (its significant digits are c then 0).
 *
 * @param c a positive integer < 10^16
 * @returns 10..99
 */
export function firstTwoDigitsOf(c: number): number {
  const nd = decimalDigitCount(c);
  return nd === 1 ? c * 10 : floor(c / POW10[nd - 2]);
}

/**
 * Digit counts of a set of amounts, kept per sign, reusable across sets ({@link reset}).
 * Create one per worker and feed it each return's cents: nothing is allocated per amount
 * or per return.
 */
export class DigitCounter {
  /** First-digit counts, index sign * 10 + digit (sign 0 positive, 1 negative). */
  readonly first = new Float64Array(20);
  /** Second-digit counts, index sign * 10 + digit. */
  readonly second = new Float64Array(20);
  /** First-two-digit counts, index sign * 100 + (10..99). */
  readonly firstTwo = new Float64Array(200);
  /** Last-two-digit counts, index sign * 100 + (0..99). */
  readonly lastTwo = new Float64Array(200);
  /** Sum of absolute cents by first two digits, index sign * 100 + (10..99) (summation test). */
  readonly sums = new Float64Array(200);
  /**
   * Sum of absolute cents of amounts >= 10 by sign and digit count, index sign * 17 + digits
   * (distortion factor). Kept as integer sums so the result does not depend on the order of
   * the amounts; see {@link collapsedSum}.
   */
  readonly byLength = new Float64Array(34);
  /** Non-zero amounts by sign and digit count of their cents, index sign * 17 + digits. */
  readonly lengths = new Float64Array(34);
  /** Zero amounts. */
  private zeroCount = 0;
  /** Amounts beyond the cents path (wide.ts), by sign. */
  readonly wideCount = new Float64Array(2);
  /**
   * Exact sums of |cents| of the wide amounts by first two digits, index sign * 100 + (10..99),
   * created on the first wide amount (summation test).
   */
  wideSums: bigint[] | null = null;
  /** Sum of the first 16 digits of each wide amount's cents, by sign (distortion factor). */
  readonly wideCollapsed: bigint[] = [0n, 0n];
  /** Scratch for {@link add}, so one amount is counted without allocating. */
  private readonly one = new Float64Array(1);

  /** Forget everything counted so far. */
  reset(): void {
    this.first.fill(0);
    this.second.fill(0);
    this.firstTwo.fill(0);
    this.lastTwo.fill(0);
    this.sums.fill(0);
    this.byLength.fill(0);
    this.lengths.fill(0);
    this.zeroCount = 0;
    this.wideCount.fill(0);
    this.wideSums = null;
    this.wideCollapsed[0] = 0n;
    this.wideCollapsed[1] = 0n;
  }

  /**
   * Count one amount too large for the cents path, from the digits of its cents (wide.ts):
   * the same rules as the fast loop, read off the string. Every wide amount is at least
   * 10^13 currency units, so it takes all four tests.
   *
   * @param negative the amount's sign
   * @param digits decimal digits of |cents|, no leading zero, 16 or more of them
   */
  addWide(negative: boolean, digits: string): void {
    const s = negative ? 1 : 0;
    const nd = digits.length;
    const f2 = (digits.charCodeAt(0) - 48) * 10 + (digits.charCodeAt(1) - 48);
    this.wideCount[s]++;
    this.first[s * 10 + FIRST_OF[f2]]++;
    this.second[s * 10 + SECOND_OF[f2]]++;
    this.firstTwo[s * 100 + f2]++;
    // last two digits of the whole-unit part: the two digits before the two cents digits
    this.lastTwo[s * 100 + (digits.charCodeAt(nd - 4) - 48) * 10 + (digits.charCodeAt(nd - 3) - 48)]++;
    const sums = (this.wideSums ??= new Array<bigint>(200).fill(0n));
    sums[s * 100 + f2] += BigInt(digits);
    this.wideCollapsed[s] += BigInt(digits.slice(0, 16));
  }

  /**
   * Count one amount.
   *
   * @param cents signed integer cents, |cents| < 10^15 (as from parse.ts)
   */
  add(cents: number): void {
    this.one[0] = cents;
    countRange(this, this.one, 0, 1, null);
  }

  /**
   * Count amounts[from..to).
   *
   * @param cents signed integer cents (Float64Array, Int32Array or number[]), as from parse.ts
   * @param from first index (default 0)
   * @param to end index, exclusive (default cents.length)
   */
  addAll(cents: ArrayLike<number>, from = 0, to: number = cents.length): void {
    countRange(this, cents, from, to, null);
  }

  /**
   * Count amounts[from..to) and, in the same pass, write the sort key 2|c| + (c < 0 ? 1 : 0)
   * of every non-zero amount into `keys` from index 0 (for the duplication and second-order
   * tests, profile.ts). `keys` may be `cents` itself: key j is written after amount i >= j
   * is read, so a block can be turned into its keys in place.
   *
   * @param cents signed integer cents
   * @param keys receives the keys in input order, one per non-zero amount; length >= to - from
   * @param from first index (default 0)
   * @param to end index, exclusive (default cents.length)
   * @returns the largest key written (0 if none)
   */
  addAllWithKeys(cents: ArrayLike<number>, keys: Float64Array, from = 0, to: number = cents.length): number {
    return countRange(this, cents, from, to, keys);
  }

  /** @internal Add to the zero count (countRange only). */
  addZeros(n: number): void {
    this.zeroCount += n;
  }

  /**
   * Count all amounts of another counter into this one (pooling returns).
   *
   * @param other the counter to add
   */
  merge(other: DigitCounter): void {
    addInto(this.first, other.first);
    addInto(this.second, other.second);
    addInto(this.firstTwo, other.firstTwo);
    addInto(this.lastTwo, other.lastTwo);
    addInto(this.sums, other.sums);
    addInto(this.byLength, other.byLength);
    addInto(this.lengths, other.lengths);
    this.zeroCount += other.zeroCount;
    addInto(this.wideCount, other.wideCount);
    if (other.wideSums !== null) {
      const sums = (this.wideSums ??= new Array<bigint>(200).fill(0n));
      for (let i = 0; i < 200; i++) sums[i] += other.wideSums[i];
    }
    this.wideCollapsed[0] += other.wideCollapsed[0];
    this.wideCollapsed[1] += other.wideCollapsed[1];
  }

  /**
   * Sum of the amounts >= 10 collapsed into [10, 100) by moving the decimal point
   * (x / 10^(digits before the point - 2)), for the distortion factor.
   *
   * @param sign which amounts (default both signs)
   * @returns the sum of the collapsed values
   */
  collapsedSum(sign: SignSelection = 'all'): number {
    let sum = 0;
    for (let nd = 4; nd <= 16; nd++) sum += pick2(this.byLength, nd, 17 + nd, sign) / POW10[nd - 2];
    // Wide amounts: their first 16 digits of cents over 10^14 (later digits move the sum by
    // less than 10^-14 an amount).
    if (sign !== 'negative') sum += Number(this.wideCollapsed[0]) / 1e14;
    if (sign !== 'positive') sum += Number(this.wideCollapsed[1]) / 1e14;
    return sum;
  }

  /** Number of zero amounts seen (left out of every test). */
  get zeros(): number {
    return this.zeroCount;
  }

  /**
   * Number of non-zero amounts of the chosen sign.
   *
   * @param sign which amounts (default both signs)
   */
  nonZero(sign: SignSelection = 'all'): number {
    return this.lengthsBelow(17, sign) + pick2(this.wideCount, 0, 1, sign);
  }

  /**
   * Amounts counted from their text (too large for cents).
   *
   * @param sign which amounts (default both signs)
   */
  wide(sign: SignSelection = 'all'): number {
    return pick2(this.wideCount, 0, 1, sign);
  }

  /**
   * Non-zero amounts below 10 (left out of the second-digit and first-two tests).
   *
   * @param sign which amounts (default both signs)
   */
  belowTen(sign: SignSelection = 'all'): number {
    return this.lengthsBelow(4, sign); // below 10 units = fewer than 4 digits of cents
  }

  /**
   * Non-zero amounts below 1,000 (left out of the last-two test), including those below 10.
   *
   * @param sign which amounts (default both signs)
   */
  belowThousand(sign: SignSelection = 'all'): number {
    return this.lengthsBelow(6, sign);
  }

  /** Non-zero amounts whose cents have fewer than `digits` digits. */
  private lengthsBelow(digits: number, sign: SignSelection): number {
    let n = 0;
    for (let nd = 1; nd < digits; nd++) n += pick2(this.lengths, nd, 17 + nd, sign);
    return n;
  }

  /**
   * How many amounts a test takes.
   *
   * @param test the digit test
   * @param sign which amounts (default both signs)
   */
  n(test: DigitTestName, sign: SignSelection = 'all'): number {
    switch (test) {
      case 'firstDigit':
        return this.nonZero(sign);
      case 'secondDigit':
      case 'firstTwo':
        return this.nonZero(sign) - this.belowTen(sign);
      case 'lastTwo':
        return this.nonZero(sign) - this.belowThousand(sign);
    }
  }

  /**
   * Count of one bin.
   *
   * @param test the digit test
   * @param bin 0-based bin in report order (first digit: bin 0 is digit 1; first two: bin 0 is 10)
   * @param sign which amounts (default both signs)
   */
  binCount(test: DigitTestName, bin: number, sign: SignSelection = 'all'): number {
    const arr = this.table(test);
    const i = BASE[test] + bin;
    const stride = arr.length >> 1;
    if (sign === 'positive') return arr[i];
    if (sign === 'negative') return arr[stride + i];
    return arr[i] + arr[stride + i];
  }

  /**
   * The counts of a test in report order (1..9, 0..9, 10..99, 00..99).
   *
   * @param test the digit test
   * @param sign which amounts (default both signs)
   * @param out optional array of length K to fill (avoids allocating)
   * @returns the counts
   */
  counts(test: DigitTestName, sign: SignSelection = 'all', out?: Float64Array): Float64Array {
    const k = BIN_COUNT[test];
    const res = out ?? new Float64Array(k);
    for (let b = 0; b < k; b++) res[b] = this.binCount(test, b, sign);
    return res;
  }

  /**
   * Mean absolute deviation of a test without allocating:
   * MAD = (1/K) sum |AP_i - EP_i| (Nigrini 2012; docs/methods.md#conformity-figures).
   *
   * @param test the digit test
   * @param expected expected proportions of the test in report order
   * @param sign which amounts (default both signs)
   * @returns the MAD, or NaN when the test has no amounts
   */
  madWith(test: DigitTestName, expected: ArrayLike<number>, sign: SignSelection = 'all'): number {
    const n = this.n(test, sign);
    if (n === 0) return NaN;
    const k = expected.length;
    let sum = 0;
    const arr = this.table(test);
    const stride = arr.length >> 1;
    const base = BASE[test];
    const pos = sign === 'negative' ? 0 : 1;
    const neg = sign === 'positive' ? 0 : 1;
    for (let b = 0; b < k; b++) {
      const count = pos * arr[base + b] + neg * arr[stride + base + b];
      sum += abs(count / n - expected[b]);
    }
    return sum / k;
  }

  /** The count table of a test: positives in the first half, negatives in the second. */
  private table(test: DigitTestName): Float64Array {
    switch (test) {
      case 'firstDigit':
        return this.first;
      case 'secondDigit':
        return this.second;
      case 'firstTwo':
        return this.firstTwo;
      case 'lastTwo':
        return this.lastTwo;
    }
  }
}

/** Index of a test's first bin in its count table (first digit 1, first two 10). */
const BASE: Readonly<Record<DigitTestName, number>> = { firstDigit: 1, secondDigit: 0, firstTwo: 10, lastTwo: 0 };

/**
 * The counting loop behind {@link DigitCounter.addAll} (module level so that both entry
 * points share one optimised body). See the module comment for the digit rules.
 *
 * @returns the largest key written to `keys`, 0 when keys is null or nothing was written
 */
function countRange(counter: DigitCounter, cents: ArrayLike<number>, from: number, to: number, keys: Float64Array | null): number {
  const first = counter.first;
  const second = counter.second;
  const firstTwo = counter.firstTwo;
  const lastTwo = counter.lastTwo;
  const sums = counter.sums;
  const byLength = counter.byLength;
  const lengths = counter.lengths;
  let zeros = 0;
  let j = 0;
  let maxKey = 0;
  for (let i = from; i < to; i++) {
    const v = cents[i];
    if (v === 0) {
      zeros++;
      continue;
    }
    const s = v < 0 ? 1 : 0;
    const c = abs(v);
    if (keys !== null) {
      const key = c + c + s;
      keys[j++] = key;
      if (key > maxKey) maxKey = key;
    }
    // Digit count as in decimalDigitCount, the common case inlined.
    let nd: number;
    if (c < TWO32) {
      nd = DIGITS_BY_BITS[32 - clz32(c)];
      if (c >= POW10[nd]) nd++;
    } else {
      nd = decimalDigitCount(c);
    }
    lengths[s * 17 + nd]++;
    if (nd === 1) {
      first[s * 10 + c]++;
      continue;
    }
    const f2 = floor(c / POW10[nd - 2]); // first two digits, exact (see module comment)
    first[s * 10 + FIRST_OF[f2]]++;
    if (nd < 4) continue; // below 10 currency units: first digit only
    const k = s * 100 + f2;
    firstTwo[k]++;
    second[s * 10 + SECOND_OF[f2]]++;
    sums[k] += c;
    byLength[s * 17 + nd] += c;
    if (nd < 6) continue; // below 1,000 units: the last two whole-unit digits are not uniform
    // last two digits of the whole-unit part: floor(c / 100) mod 100
    const r = c - floor(c / 10000) * 10000; // c mod 10^4, exact
    lastTwo[s * 100 + ((r / 100) | 0)]++;
  }
  if (zeros > 0) counter.addZeros(zeros);
  return maxKey;
}

/** First digit of a two-digit number 10..99 (lookup: cheaper than a division in the loop). */
const FIRST_OF: Uint8Array = Uint8Array.from({ length: 100 }, (_, n) => floor(n / 10));
/** Second digit of a two-digit number 10..99. */
const SECOND_OF: Uint8Array = Uint8Array.from({ length: 100 }, (_, n) => n % 10);

function pick2(a: Float64Array, positive: number, negative: number, sign: SignSelection): number {
  if (sign === 'positive') return a[positive];
  if (sign === 'negative') return a[negative];
  return a[positive] + a[negative];
}

function addInto(a: Float64Array, b: Float64Array): void {
  for (let i = 0; i < a.length; i++) a[i] += b[i];
}
