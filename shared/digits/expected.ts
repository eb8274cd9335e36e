/**
 * Expected digit proportions under Benford's law, and the names of the four digit tests.
 *
 * Every formula here is in docs/methods.md#expected-proportions. The tables are
 * computed from the formulas (not typed in) so they carry full double precision; the unit
 * tests compare them with the published 5-decimal tables.
 */

/** The four digit tests, in the order the profile reports them. */
export const DIGIT_TESTS = ['firstDigit', 'secondDigit', 'firstTwo', 'lastTwo'] as const;

/** One of the four digit tests. */
export type DigitTestName = (typeof DIGIT_TESTS)[number];

/**
 * The digit each bin of a test stands for, in report order:
 * first digit 1..9, second digit 0..9, first two 10..99, last two 0..99 (shown as 00..99).
 */
export const DIGIT_LABELS: Readonly<Record<DigitTestName, readonly number[]>> = {
  firstDigit: range(1, 9),
  secondDigit: range(0, 9),
  firstTwo: range(10, 99),
  lastTwo: range(0, 99),
};

/** Number of bins K of each test (9, 10, 90, 100). */
export const BIN_COUNT: Readonly<Record<DigitTestName, number>> = {
  firstDigit: 9,
  secondDigit: 10,
  firstTwo: 90,
  lastTwo: 100,
};

/**
 * First significant digit d = 1..9: P(d) = log10(1 + 1/d).
 * Source: Benford 1938; Hill 1995, Statistical Science (docs/methods.md#expected-proportions).
 */
export const FIRST_DIGIT_EXPECTED: Float64Array = Float64Array.from(range(1, 9), (d) => Math.log10(1 + 1 / d));

/**
 * Second significant digit d = 0..9: P(d) = sum over k = 1..9 of log10(1 + 1/(10k + d)).
 * Source: Benford 1938; Hill 1995 (docs/methods.md#expected-proportions).
 */
export const SECOND_DIGIT_EXPECTED: Float64Array = Float64Array.from(range(0, 9), (d) => {
  let p = 0;
  for (let k = 1; k <= 9; k++) p += Math.log10(1 + 1 / (10 * k + d));
  return p;
});

/**
 * First two significant digits n = 10..99: P(n) = log10(1 + 1/n).
 * Source: Benford 1938; Hill 1995 (docs/methods.md#expected-proportions).
 */
export const FIRST_TWO_EXPECTED: Float64Array = Float64Array.from(range(10, 99), (n) => Math.log10(1 + 1 / n));

/**
 * Last two digits of the whole-unit part, 00..99: uniform, P = 0.01 each
 * (amounts >= 1,000 only, where they are past the second significant digit, see
 * docs/methods.md#which-amounts-each-test-takes; common practice, no source).
 */
export const LAST_TWO_EXPECTED: Float64Array = new Float64Array(100).fill(0.01);

/** Expected proportions of each test, in report order. */
export const EXPECTED: Readonly<Record<DigitTestName, Float64Array>> = {
  firstDigit: FIRST_DIGIT_EXPECTED,
  secondDigit: SECOND_DIGIT_EXPECTED,
  firstTwo: FIRST_TWO_EXPECTED,
  lastTwo: LAST_TWO_EXPECTED,
};

function range(from: number, to: number): number[] {
  const out: number[] = [];
  for (let i = from; i <= to; i++) out.push(i);
  return out;
}
