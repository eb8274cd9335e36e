/**
 * The digit figures in words and numbers for people: the names of the four tests, a bin's
 * label, the largest deviations, the goodness-of-fit verdicts and the number formats shared
 * by the command line (scripts/digits.ts), the working paper PDF
 * (server/analyses/working-paper-pdf.ts) and the digit analysis screen.
 */
import { DIGIT_LABELS, type DigitTestName } from './expected';
import type { GroupFigures } from './split';
import type { GoodnessVerdict } from './tests';

/** Each test's name as a heading. */
export const DIGIT_TEST_TITLES: Readonly<Record<DigitTestName, string>> = {
  firstDigit: 'First digit',
  secondDigit: 'Second digit',
  firstTwo: 'First two digits',
  lastTwo: 'Last two digits',
};

/** What a bin of a test stands for: "7", "42", or for the last two digits "05". */
export function binLabel(test: DigitTestName, bin: number): string {
  const d = DIGIT_LABELS[test][bin];
  return test === 'lastTwo' ? String(d).padStart(2, '0') : String(d);
}

/** A number with `digits` decimals, or a dash for no figure. */
export function fixedOrDash(x: number | null, digits: number): string {
  return x === null ? '—' : x.toFixed(digits);
}

/** A share as a percentage with one decimal ("12.3 %"), or a dash. */
export function percentOrDash(x: number | null): string {
  return x === null ? '—' : `${(100 * x).toFixed(1)} %`;
}

/** A p-value with 4 decimals, "< 0.0001" below that, or a dash. */
export function pValueText(p: number | null): string {
  if (p === null) return '—';
  return p < 0.0001 ? '< 0.0001' : p.toFixed(4);
}

/** A Kolmogorov–Smirnov or Kuiper verdict in words, or a dash. */
export function goodnessWords(v: GoodnessVerdict | null): string {
  if (v === null) return '—';
  return v === 'not_rejected' ? 'not rejected' : v === 'rejected_5' ? 'rejected at 5 %' : 'rejected at 1 %';
}

/** One bin among the largest deviations of a test. */
export interface Deviation {
  /** The bin's label ({@link binLabel}). */
  label: string;
  /** Observed share (the test has n > 0). */
  observed: number;
  /** Expected share. */
  expected: number;
  /** Its Z statistic (0 where the test gives none). */
  z: number;
}

/**
 * The bins furthest above their expected share, by Z, largest first (ties: bin order).
 *
 * @param test the test
 * @param r its counts, expected shares, Z values and n (n > 0)
 * @param k how many (default 5)
 */
export function largestDeviations(
  test: DigitTestName,
  r: { n: number; counts: readonly number[]; expected: readonly number[]; z: readonly (number | null)[] },
  k = 5,
): Deviation[] {
  return r.z
    .map((z, i) => ({ z: z ?? 0, i }))
    .sort((a, b) => b.z - a.z || a.i - b.i)
    .slice(0, k)
    .map(({ z, i }) => ({ label: binLabel(test, i), observed: r.counts[i] / r.n, expected: r.expected[i], z }));
}

/** The groups of a split, highest size-aware z first (groups without a z last, in their order). */
export function groupsByZ<G extends Pick<GroupFigures, 'sizeAware'>>(groups: readonly G[]): G[] {
  return [...groups].sort((a, b) => (b.sizeAware.zScore ?? -Infinity) - (a.sizeAware.zScore ?? -Infinity));
}
