/**
 * The digit profile of a set of amounts: the JSON object of docs/design.md#command-line, printed by
 * `npm run digits -- FILE --json` and answered by POST /api/analyses/digits.
 *
 * Entry points:
 *  - {@link profileAmounts}: numbers / decimal strings (or integer cents) → profile;
 *  - {@link profileCents}: signed integer cents already parsed → profile;
 *  - {@link summarizeCounter}: per-return fast path from a reused {@link DigitCounter}
 *    (counts, MAD and size-aware figures, no duplicates / summation / second order).
 */

import { DigitCounter, POW10, decimalDigitCount, type SignSelection } from './counter';
import { DIGIT_TESTS, EXPECTED, type DigitTestName } from './expected';
import { formatCents, parseAmounts, type AmountUnit } from './parse';
import { defaultPosition, formatWide, readAmountsInto, type AmountColumn, type WideAmount } from './wide';
import { sizeAwareFigure, type SizeAwareResult } from './size-aware';
import { IntegerKeyList } from './sort';
import { binomialUpperTail } from './stats';
import { evaluateDigitTest, type DigitTestResult } from './tests';

// Math functions bound once: a global `Math` lookup in a hot loop is slow under jest's vm
// sandbox (about 150 ns a call), and the local binding costs nothing under plain node.
const { floor, abs } = Math;

/** Why amounts were left out of a test. */
export type ExclusionReason = 'zero' | 'below_10' | 'below_1000';

/** Amounts left out for one reason. */
export interface Exclusion {
  /** The reason code. */
  reason: ExclusionReason;
  /** Plain-words reason. */
  description: string;
  /** How many amounts. */
  count: number;
  /** The tests that left them out. */
  tests: DigitTestName[];
}

/** Share of round amounts (whole-unit part ending in 00) among amounts >= 1,000. */
export interface RoundShare {
  /** Amounts >= 1,000 (those the last-two test takes). */
  n: number;
  /** Of those, amounts whose whole-unit part ends in 00. */
  count: number;
  /** count / n. */
  share: number | null;
  /** Share expected when last two digits are uniform: 0.01. */
  expected: number;
  /** P(X >= count) for X ~ Binomial(n, 0.01) (docs/methods.md#other-digit-figures, round-number share). */
  pValue: number | null;
}

/** An amount that occurs more than once. */
export interface DuplicateAmount {
  /** The exact amount, 2 decimals ("1234.50", "-80.00"). */
  amount: string;
  /** How many times it occurs. */
  count: number;
}

/** Summation test (Nigrini 2011, Forensic Analytics): amounts summed by first two digits. */
export interface Summation {
  /** Amounts >= 10 (those with two significant digits before the point). */
  n: number;
  /** Sum of their absolute values, currency units (null beyond the range of a double, about 1.8e308). */
  total: number | null;
  /** Sum per first-two group 10..99, currency units (null beyond the range of a double). */
  sums: (number | null)[];
  /** Each group's share of the total, 10..99 (null entries when total is 0). */
  proportions: (number | null)[];
  /** Expected share of each group: 1/90. */
  expected: number;
  /** (1/90) sum |share - 1/90|. */
  mad: number | null;
  /** The (up to) five groups with the largest non-zero shares, largest first. */
  largest: { digits: number; share: number }[];
}

/** Second-order test (Nigrini & Miller 2009): first two digits of differences of sorted amounts. */
export interface SecondOrder {
  /** Non-zero differences counted. */
  n: number;
  /** Differences of zero (repeated absolute amounts), left out. */
  zeroDifferences: number;
  /** Counts of first two digits 10..99 of the differences (a one-digit difference d counts as d0). */
  counts: number[];
  /** MAD against the Benford first-two proportions. */
  mad: number | null;
}

/** Distortion factor (Nigrini 1996; formula from memory, docs/methods.md#other-digit-figures). */
export interface DistortionFactor {
  /** Amounts >= 10 collapsed into [10, 100). */
  n: number;
  /** Mean of the collapsed amounts. */
  mean: number | null;
  /** Expected mean EM = 90 / (n (10^(1/n) - 1)). */
  expectedMean: number | null;
  /** DF = (mean - EM) / EM; negative means amounts are understated in their leading digits. */
  value: number | null;
}

/** The digit tests of the amounts of one sign. */
export interface SideProfile {
  /** Non-zero amounts of this sign. */
  count: number;
  /** First-digit test. */
  firstDigit: DigitTestResult;
  /** Second-digit test. */
  secondDigit: DigitTestResult;
  /** First-two-digit test. */
  firstTwo: DigitTestResult;
  /** Last-two-digit test. */
  lastTwo: DigitTestResult;
  /** Size-aware figure of the first digit. */
  sizeAware: SizeAwareResult;
}

/** The full digit profile (docs/design.md#command-line, plus the documented extra fields). */
export interface DigitProfile {
  /** Amounts given, zeros included. */
  count: number;
  /** Amounts left out, by reason. */
  excluded: Exclusion[];
  /** First-digit test (every non-zero amount). */
  firstDigit: DigitTestResult;
  /** Second-digit test (amounts >= 10). */
  secondDigit: DigitTestResult;
  /** First-two-digit test (amounts >= 10). */
  firstTwo: DigitTestResult;
  /** Last-two-digit test (amounts >= 1,000; whole-unit part). */
  lastTwo: DigitTestResult;
  /** Size-aware figure of the first-digit test: the one a single return is judged by. */
  sizeAware: SizeAwareResult;
  /** Size-aware figures of all four tests. */
  sizeAwareByTest: Record<DigitTestName, SizeAwareResult>;
  /** Round-number share. */
  roundShare: RoundShare;
  /** Most repeated non-zero amounts (count >= 2), most frequent first, then larger first. */
  duplicates: DuplicateAmount[];
  /** Summation test. */
  summation: Summation;
  /** Second-order test. */
  secondOrder: SecondOrder;
  /** Distortion factor. */
  distortionFactor: DistortionFactor;
  /** The tests on positive amounts alone. */
  positives: SideProfile;
  /** The tests on negative amounts alone (absolute values). */
  negatives: SideProfile;
}

/** Options of the profile functions. */
export interface ProfileOptions {
  /** How many repeated amounts to list (default 10). */
  top?: number;
  /** Amounts too large for cents, counted from their digits (wide.ts). */
  wide?: readonly WideAmount[];
}

/** Options of {@link profileAmounts}. */
export interface ProfileAmountsOptions extends ProfileOptions {
  /** 'amount' (default): currency units; 'cents': integer cents. */
  unit?: AmountUnit;
  /** Names value i in error messages (default `index ${i}`). */
  positionOf?: (index: number) => string;
}

/**
 * Amounts read and counted per block. Why blocks: a block's cents and keys stay in the
 * processor's cache between reading and counting, and no array of every amount's cents (80 MB
 * for 10 million) is made, whose memory outside the heap would set off garbage collections
 * that walk every string of the input.
 */
const BLOCK = 65536;

/**
 * Profile a list of amounts of any size.
 *
 * @param amounts numbers or decimal strings (at most 2 decimals; any size; scientific notation
 *   such as 1.2E+15 accepted), or integer cents with unit 'cents'
 * @param options unit, duplicates to list, position names for errors
 * @returns the digit profile
 * @throws AmountParseError naming the first value that is not an amount and its position
 */
export function profileAmounts(amounts: ArrayLike<unknown>, options: ProfileAmountsOptions = {}): DigitProfile {
  if (options.unit === 'cents') return profileCents(parseAmounts(amounts, options), options);
  const positionOf = options.positionOf ?? defaultPosition;
  const n = amounts.length;
  const counter = new DigitCounter();
  const keys = new IntegerKeyList(n);
  const wide: WideAmount[] = [];
  const block = new Float64Array(Math.min(n, BLOCK));
  for (let from = 0; from < n; from += BLOCK) {
    const to = Math.min(n, from + BLOCK);
    const read = readAmountsInto(amounts, from, to, block, wide, positionOf);
    countBlock(counter, block, 0, read, block, keys); // the block's cents become its keys
  }
  return finishProfile(counter, keys, n, { ...options, wide });
}

/**
 * Profile a column read by wide.ts (ordinary amounts as cents, the rest as digits).
 *
 * @param column the amounts
 * @param options duplicates to list
 * @returns the digit profile
 */
export function profileColumn(column: AmountColumn, options: ProfileOptions = {}): DigitProfile {
  return profileCents(column.cents, { ...options, wide: column.wide });
}

/**
 * Profile amounts given as signed integer cents (from parse.ts; not re-checked).
 *
 * @param cents signed integer cents, |cents| < 10^15
 * @param options duplicates to list
 * @returns the digit profile
 */
export function profileCents(cents: ArrayLike<number>, options: ProfileOptions = {}): DigitProfile {
  const n = cents.length;
  const counter = new DigitCounter();
  const keys = new IntegerKeyList(n);
  const block = new Float64Array(Math.min(n, BLOCK));
  for (let from = 0; from < n; from += BLOCK) countBlock(counter, cents, from, Math.min(n, from + BLOCK), block, keys);
  return finishProfile(counter, keys, n + (options.wide?.length ?? 0), options);
}

/** Count cents[from..to) and append the keys of its non-zero amounts (via `block`, which may be `cents`). */
function countBlock(counter: DigitCounter, cents: ArrayLike<number>, from: number, to: number, block: Float64Array, keys: IntegerKeyList): void {
  const zerosBefore = counter.zeros;
  const maxKey = counter.addAllWithKeys(cents, block, from, to);
  keys.append(block, to - from - (counter.zeros - zerosBefore), maxKey); // one key per non-zero amount
}

/** The profile from the counted ordinary amounts and their keys, with the wide amounts added. */
function finishProfile(counter: DigitCounter, keys: IntegerKeyList, count: number, options: ProfileOptions): DigitProfile {
  const wide = options.wide ?? [];
  for (const w of wide) counter.addWide(w.negative, w.digits);
  const ordered = orderedScan(keys.sorted(), options.top ?? 10, wide);

  const tests = {} as Record<DigitTestName, DigitTestResult>;
  const sizeAwareByTest = {} as Record<DigitTestName, SizeAwareResult>;
  for (const t of DIGIT_TESTS) {
    tests[t] = evaluateDigitTest(t, counter.counts(t));
    sizeAwareByTest[t] = sizeAwareFigure(t, tests[t].n, tests[t].mad);
  }
  const lastN = tests.lastTwo.n;
  const roundCount = tests.lastTwo.counts[0];
  return {
    count,
    excluded: exclusions(counter),
    firstDigit: tests.firstDigit,
    secondDigit: tests.secondDigit,
    firstTwo: tests.firstTwo,
    lastTwo: tests.lastTwo,
    sizeAware: sizeAwareByTest.firstDigit,
    sizeAwareByTest,
    roundShare: {
      n: lastN,
      count: roundCount,
      share: lastN > 0 ? roundCount / lastN : null,
      expected: 0.01,
      pValue: lastN > 0 ? binomialUpperTail(roundCount, lastN, 0.01) : null,
    },
    duplicates: ordered.duplicates,
    summation: summation(counter),
    secondOrder: ordered.secondOrder,
    distortionFactor: distortionFactor(counter),
    positives: sideProfile(counter, 'positive'),
    negatives: sideProfile(counter, 'negative'),
  };
}

/** Per-return figures from a counter, without the list-based tests. */
export interface DigitSummary {
  /** Amounts each test took. */
  n: Record<DigitTestName, number>;
  /** MAD of each test (NaN when the test has no amounts). */
  mad: Record<DigitTestName, number>;
  /** Size-aware figure of each test. */
  sizeAware: Record<DigitTestName, SizeAwareResult>;
  /** The size-aware verdict of the first digit (the one a return is judged by). */
  verdict: SizeAwareResult['verdict'];
}

/**
 * Cheap per-return figures: feed a reused counter (reset, addAll(cents)) and read this.
 * Allocates a few small objects per call and nothing per amount.
 *
 * @param counter a counter holding the return's amounts
 * @param sign which amounts (default both signs)
 * @returns n, MAD and size-aware figure per test, and the first-digit verdict
 */
export function summarizeCounter(counter: DigitCounter, sign: SignSelection = 'all'): DigitSummary {
  const n = {} as Record<DigitTestName, number>;
  const mad = {} as Record<DigitTestName, number>;
  const sizeAware = {} as Record<DigitTestName, SizeAwareResult>;
  for (const t of DIGIT_TESTS) {
    n[t] = counter.n(t, sign);
    mad[t] = counter.madWith(t, EXPECTED[t], sign);
    sizeAware[t] = sizeAwareFigure(t, n[t], mad[t]);
  }
  return { n, mad, sizeAware, verdict: sizeAware.firstDigit.verdict };
}

function exclusions(counter: DigitCounter): Exclusion[] {
  return [
    {
      reason: 'zero',
      description: 'zero amounts (no significant digit)',
      count: counter.zeros,
      tests: ['firstDigit', 'secondDigit', 'firstTwo', 'lastTwo'],
    },
    {
      reason: 'below_10',
      description: 'non-zero amounts below 10 (fewer than two digits before the point)',
      count: counter.belowTen(),
      tests: ['secondDigit', 'firstTwo'],
    },
    {
      reason: 'below_1000',
      description: 'non-zero amounts below 1,000, those below 10 included (their last two whole-unit digits are not uniform)',
      count: counter.belowThousand(),
      tests: ['lastTwo'],
    },
  ];
}

function sideProfile(counter: DigitCounter, sign: SignSelection): SideProfile {
  const t = (test: DigitTestName) => evaluateDigitTest(test, counter.counts(test, sign));
  const firstDigit = t('firstDigit');
  return {
    count: counter.nonZero(sign),
    firstDigit,
    secondDigit: t('secondDigit'),
    firstTwo: t('firstTwo'),
    lastTwo: t('lastTwo'),
    sizeAware: sizeAwareFigure('firstDigit', firstDigit.n, firstDigit.mad),
  };
}

/**
 * Summation test: share of the total of each first-two group against 1/90
 * (Nigrini 2011, Forensic Analytics; docs/methods.md#other-digit-figures).
 */
function summation(counter: DigitCounter): Summation {
  const n = counter.n('firstTwo');
  const expected = 1 / 90;
  let sums: (number | null)[];
  let total: number | null;
  let proportions: number[];
  if (counter.wideSums === null) {
    const units: number[] = [];
    let totalCents = 0;
    for (let d = 10; d <= 99; d++) {
      const s = counter.sums[d] + counter.sums[100 + d];
      units.push(s / 100);
      totalCents += s;
    }
    sums = units;
    total = totalCents / 100;
    if (totalCents === 0) return { n, total, sums, proportions: units.map(() => null), expected, mad: null, largest: [] };
    proportions = units.map((u) => (u * 100) / totalCents);
  } else {
    // Amounts too large for cents: the group sums in exact integers (bigint), shares from
    // their quotient, so a 10^300 amount neither overflows nor swamps the rounding. The
    // total is above 0: every wide amount is.
    const wideSums = counter.wideSums;
    const groups: bigint[] = [];
    let totalCents = 0n;
    for (let d = 10; d <= 99; d++) {
      const g = BigInt(counter.sums[d]) + BigInt(counter.sums[100 + d]) + wideSums[d] + wideSums[100 + d];
      groups.push(g);
      totalCents += g;
    }
    const toUnits = (c: bigint): number | null => {
      const x = Number(c) / 100;
      return Number.isFinite(x) ? x : null;
    };
    const SCALE = 10n ** 18n;
    sums = groups.map(toUnits);
    total = toUnits(totalCents);
    proportions = groups.map((g) => Number((g * SCALE) / totalCents) / 1e18);
  }
  let mad = 0;
  for (const p of proportions) mad += abs(p - expected);
  const largest = proportions
    .map((share, i) => ({ digits: i + 10, share }))
    .filter((g) => g.share > 0)
    .sort((a, b) => b.share - a.share || a.digits - b.digits)
    .slice(0, 5);
  return { n, total, sums, proportions, expected, mad: mad / 90, largest };
}

/**
 * Distortion factor (Nigrini 1996, JATA; formula from memory, docs/methods.md#other-digit-figures): amounts >= 10
 * collapsed into [10, 100) by moving the point; DF = (mean - EM) / EM with
 * EM = 90 / (n (10^(1/n) - 1)), which tends to 90 / ln 10 = 39.09 for large n.
 */
function distortionFactor(counter: DigitCounter): DistortionFactor {
  const n = counter.n('firstTwo');
  if (n === 0) return { n, mean: null, expectedMean: null, value: null };
  const mean = counter.collapsedSum() / n;
  // expm1 keeps precision where 10^(1/n) - 1 is tiny (large n).
  const expectedMean = 90 / (n * Math.expm1(Math.LN10 / n));
  return { n, mean, expectedMean, value: (mean - expectedMean) / expectedMean };
}

/**
 * One sort serves two tests. Keys are 2|c| + (c < 0 ? 1 : 0) (written by the counting pass),
 * given here sorted:
 * sorted keys put equal exact amounts next to each other (number duplication, Nigrini 2011)
 * and list absolute values in ascending order (second-order test, Nigrini & Miller 2009).
 * Zeros have no key and are left out of both.
 */
function orderedScan(
  sorted: Uint32Array | Float64Array,
  top: number,
  wide: readonly WideAmount[],
): { duplicates: DuplicateAmount[]; secondOrder: SecondOrder } {
  // Imported bindings as locals: module loaders (tsx, jest) compile them to getter calls.
  const digitCount = decimalDigitCount;
  const pow10 = POW10;

  const topCount = new Float64Array(top);
  const topKey = new Float64Array(top);
  let topLen = 0;
  const soCounts = new Float64Array(100);
  let zeroDiffs = 0;
  let prevSize = -1;
  let runKey = -1;
  let runLen = 0;
  const n = sorted.length;
  for (let i = 0; i <= n; i++) {
    const key = i < n ? sorted[i] : -2;
    if (key === runKey) {
      runLen++;
    } else {
      if (runLen >= 2 && top > 0) offer(runKey, runLen);
      runKey = key;
      runLen = 1;
    }
    if (i === n) break;
    const size = floor(key / 2); // |cents|
    if (prevSize >= 0) {
      const d = size - prevSize;
      if (d === 0) zeroDiffs++;
      else {
        const nd = digitCount(d);
        soCounts[nd === 1 ? d * 10 : floor(d / pow10[nd - 2])]++;
      }
    }
    prevSize = size;
  }

  const duplicates: DuplicateAmount[] = [];
  for (let i = 0; i < topLen; i++) {
    const key = topKey[i];
    const size = floor(key / 2);
    duplicates.push({ amount: formatCents(key % 2 === 1 ? -size : size), count: topCount[i] });
  }
  let all = n;
  let dups = duplicates;
  if (wide.length > 0) {
    // Every wide amount is larger than every ordinary one, so they follow in sorted order.
    const w = wideScan(wide, n > 0 ? floor(sorted[n - 1] / 2) : null, soCounts, top);
    zeroDiffs += w.zeroDifferences;
    all += wide.length;
    dups = mergeDuplicates(duplicates, w.runs, top);
  }
  const counts = Array.from(soCounts.subarray(10, 100));
  const soN = all > 0 ? all - 1 - zeroDiffs : 0;
  let mad: number | null = null;
  if (soN > 0) {
    let s = 0;
    for (let d = 0; d < 90; d++) s += abs(counts[d] / soN - EXPECTED.firstTwo[d]);
    mad = s / 90;
  }
  return { duplicates: dups, secondOrder: { n: soN, zeroDifferences: zeroDiffs, counts, mad } };

  /** Keep the `top` most repeated: count desc, then larger absolute amount, then positive first. */
  function offer(key: number, count: number): void {
    const size = floor(key / 2);
    let at = topLen;
    while (at > 0) {
      const c = topCount[at - 1];
      if (count > c || (count === c && size > floor(topKey[at - 1] / 2))) at--;
      else break;
    }
    if (at >= top) return;
    const end = Math.min(topLen, top - 1);
    for (let m = end; m > at; m--) {
      topCount[m] = topCount[m - 1];
      topKey[m] = topKey[m - 1];
    }
    topCount[at] = count;
    topKey[at] = key;
    if (topLen < top) topLen++;
  }
}

/** A repeated wide amount. */
interface WideRun {
  amount: WideAmount;
  count: number;
}

/**
 * The second-order differences and repeated amounts among the wide amounts, in exact
 * integers: sorted by size (digit count, then digits), positives before negatives of equal size.
 */
function wideScan(wide: readonly WideAmount[], lastOrdinary: number | null, soCounts: Float64Array, top: number): { zeroDifferences: number; runs: WideRun[] } {
  const sorted = wide
    .slice()
    .sort((a, b) => a.digits.length - b.digits.length || (a.digits < b.digits ? -1 : a.digits > b.digits ? 1 : 0) || Number(a.negative) - Number(b.negative));
  let prev: bigint | null = lastOrdinary === null ? null : BigInt(lastOrdinary);
  let zeroDifferences = 0;
  const runs: WideRun[] = [];
  let run: WideRun | null = null;
  for (const w of sorted) {
    const size = BigInt(w.digits);
    if (prev !== null) {
      const d = size - prev;
      if (d === 0n) zeroDifferences++;
      else {
        const text = d.toString();
        soCounts[text.length === 1 ? Number(text) * 10 : Number(text.slice(0, 2))]++;
      }
    }
    prev = size;
    if (run !== null && run.amount.digits === w.digits && run.amount.negative === w.negative) run.count++;
    else {
      if (run !== null && run.count >= 2) runs.push(run);
      run = { amount: w, count: 1 };
    }
  }
  if (run !== null && run.count >= 2) runs.push(run);
  // Most repeated first, then larger, then positive first (the order of the ordinary list).
  runs.sort(
    (a, b) =>
      b.count - a.count ||
      b.amount.digits.length - a.amount.digits.length ||
      (a.amount.digits < b.amount.digits ? 1 : a.amount.digits > b.amount.digits ? -1 : 0) ||
      Number(a.amount.negative) - Number(b.amount.negative),
  );
  return { zeroDifferences, runs: runs.slice(0, top) };
}

/** The ordinary and wide repeated amounts in one list: count, then size (wide ones are larger). */
function mergeDuplicates(ordinary: DuplicateAmount[], wide: WideRun[], top: number): DuplicateAmount[] {
  const out: DuplicateAmount[] = [];
  let i = 0;
  let j = 0;
  while (out.length < top && (i < ordinary.length || j < wide.length)) {
    if (j < wide.length && (i >= ordinary.length || wide[j].count >= ordinary[i].count)) {
      out.push({ amount: formatWide(wide[j].amount), count: wide[j].count });
      j++;
    } else out.push(ordinary[i++]);
  }
  return out;
}
