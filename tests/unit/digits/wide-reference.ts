/**
 * An independent computation of the digit counts, MAD and chi-square for amounts of any size,
 * written the slow obvious way so it shares nothing with shared/digits: digits from BigInt's
 * decimal text, Benford proportions from log10(1 + 1/d) (math fact), the chi-square p-value
 * from jstat (npm, jStat.chisquare.cdf). Used by the unit, CLI and API tests of wide amounts.
 */

// jstat (npm), an independent check, tests only; it ships no type declarations.
// eslint-disable-next-line @typescript-eslint/no-require-imports
const jStat = require('jstat') as { chisquare: { cdf: (x: number, df: number) => number } };

/** An amount as a whole number of currency units (BigInt) and the text written for it. */
export interface ReferenceAmount {
  /** The exact value, whole currency units (negative allowed). */
  value: bigint;
  /** The text put in the file or the request. */
  text: string;
}

/** Counts, MAD and chi-square of one test. */
export interface ReferenceTest {
  n: number;
  counts: number[];
  mad: number;
  chiSquare: number;
  pValue: number;
}

type TestName = 'firstDigit' | 'secondDigit' | 'firstTwo' | 'lastTwo';
const TEST_NAMES: readonly TestName[] = ['firstDigit', 'secondDigit', 'firstTwo', 'lastTwo'];

function benfordFirst(): number[] {
  return Array.from({ length: 9 }, (_, i) => Math.log10(1 + 1 / (i + 1)));
}

function benfordFirstTwo(): number[] {
  return Array.from({ length: 90 }, (_, i) => Math.log10(1 + 1 / (i + 10)));
}

function benfordSecond(): number[] {
  return Array.from({ length: 10 }, (_, d) => {
    let p = 0;
    for (let k = 1; k <= 9; k++) p += Math.log10(1 + 1 / (10 * k + d));
    return p;
  });
}

function figures(counts: number[], expected: number[]): ReferenceTest {
  const n = counts.reduce((s, c) => s + c, 0);
  let mad = 0;
  let chi = 0;
  counts.forEach((c, i) => {
    mad += Math.abs(c / n - expected[i]);
    chi += (c - n * expected[i]) ** 2 / (n * expected[i]);
  });
  return { n, counts, mad: mad / counts.length, chiSquare: chi, pValue: 1 - jStat.chisquare.cdf(chi, counts.length - 1) };
}

/**
 * The four digit tests of whole-unit amounts: first digit of every non-zero amount; second
 * and first two of amounts >= 10; last two whole-unit digits of amounts >= 1,000.
 */
export function referenceTests(amounts: readonly ReferenceAmount[]): Record<TestName, ReferenceTest> {
  const first = new Array<number>(9).fill(0);
  const second = new Array<number>(10).fill(0);
  const firstTwo = new Array<number>(90).fill(0);
  const lastTwo = new Array<number>(100).fill(0);
  for (const a of amounts) {
    const digits = (a.value < 0n ? -a.value : a.value).toString();
    if (digits === '0') continue;
    first[Number(digits[0]) - 1]++;
    if (digits.length >= 2) {
      second[Number(digits[1])]++;
      firstTwo[Number(digits.slice(0, 2)) - 10]++;
    }
    if (digits.length >= 4) lastTwo[Number(digits.slice(-2))]++;
  }
  return {
    firstDigit: figures(first, benfordFirst()),
    secondDigit: figures(second, benfordSecond()),
    firstTwo: figures(firstTwo, benfordFirstTwo()),
    lastTwo: figures(lastTwo, new Array<number>(100).fill(0.01)),
  };
}

/** The four tests' figures as a profile JSON carries them (shared/digits/schema.ts). */
type ProfileFigures = { count: number } & Record<
  TestName,
  { n: number; counts: number[]; mad: number | null; chiSquare: number | null; pValue: number | null }
>;

/**
 * Expects a digit profile of `amounts` to agree with {@link referenceTests}: the count, each
 * test's n and counts exactly, MAD to 12 decimals, chi-square and its p-value to 8.
 */
export function expectAgreement(p: ProfileFigures, amounts: readonly ReferenceAmount[]): void {
  const ref = referenceTests(amounts);
  expect(p.count).toBe(amounts.length);
  for (const t of TEST_NAMES) {
    expect(p[t].counts).toEqual(ref[t].counts);
    expect(p[t].n).toBe(ref[t].n);
    expect(p[t].mad).toBeCloseTo(ref[t].mad, 12);
    expect(p[t].chiSquare).toBeCloseTo(ref[t].chiSquare, 8);
    expect(p[t].pValue).toBeCloseTo(ref[t].pValue, 8);
  }
}

/** 2^0 .. 2^k: integers running to hundreds of digits (2^1000 has 302). */
export function powersOfTwo(k: number): ReferenceAmount[] {
  const out: ReferenceAmount[] = [];
  let v = 1n;
  for (let i = 0; i <= k; i++) {
    out.push({ value: v, text: v.toString() });
    v *= 2n;
  }
  return out;
}

/**
 * Values in scientific notation as spreadsheets write them (1.2345E+15, some with a lower-case e
 * or a minus sign), with exponents from 3 to 60, so some fall below 10^13 and take the ordinary path.
 */
export function scientificValues(count: number): ReferenceAmount[] {
  const out: ReferenceAmount[] = [];
  let seed = 12345;
  const next = () => {
    seed = (seed * 1103515245 + 12345) % 2147483648;
    return seed / 2147483648;
  };
  for (let i = 0; i < count; i++) {
    // mantissa 1.000 .. 9.999 drawn log-uniformly (Benford-like), 4 significant digits
    const mantissa = Math.min(9999, Math.floor(1000 * 10 ** next()));
    const exp = 3 + Math.floor(next() * 58);
    const negative = i % 7 === 3;
    const value = BigInt(mantissa) * 10n ** BigInt(exp - 3);
    const m = `${String(mantissa)[0]}.${String(mantissa).slice(1)}`;
    const text = `${negative ? '-' : ''}${m}${i % 5 === 0 ? 'e' : 'E'}+${exp}`;
    out.push({ value: negative ? -value : value, text });
  }
  return out;
}
