/**
 * The conformity figures of one digit test: MAD with its published conformity level,
 * chi-square with p-value, Kolmogorov–Smirnov, Kuiper, SSD and Z per digit.
 * Formulas and thresholds: docs/methods.md#conformity-figures.
 */

import { BIN_COUNT, EXPECTED, type DigitTestName } from './expected';
import { chiSquareSurvival } from './stats';

/** Conformity level of a (large, pooled) set of amounts. */
export type Conformity = 'close' | 'acceptable' | 'marginal' | 'nonconformity' | 'too_few';

/**
 * Nigrini 2012 (Benford's Law, Wiley) MAD upper bounds of close / acceptable / marginal
 * conformity; above the last bound is nonconformity (docs/methods.md#conformity-figures). Made for thousands of
 * amounts: never applied below {@link MIN_N_FOR_CONFORMITY}.
 */
export const MAD_THRESHOLDS: Readonly<Record<'firstDigit' | 'secondDigit' | 'firstTwo', readonly [number, number, number]>> = {
  firstDigit: [0.006, 0.012, 0.015],
  secondDigit: [0.008, 0.01, 0.012],
  firstTwo: [0.0012, 0.0018, 0.0022],
};

/**
 * Last two digits have no published MAD thresholds. The product judges them by the
 * chi-square p-value instead (common practice, no source): p >= 0.05 close,
 * 0.01 <= p < 0.05 acceptable, 0.001 <= p < 0.01 marginal, p < 0.001 nonconformity.
 * The 5 % and 1 % levels are the usual significance levels; 0.1 % continues the series.
 */
export const LAST_TWO_P_THRESHOLDS: readonly [number, number, number] = [0.05, 0.01, 0.001];

/**
 * Fewest amounts a test needs before the fixed thresholds give a conformity level;
 * below it the level is `too_few`. Product rule, derived here (no published source):
 * for the MAD tests, a round N at which a sample drawn exactly from Benford's law is called
 * `nonconformity` at most 1 % of the time. Seeded simulation, 20 000 samples: first digit
 * 0.5 % at N = 800 (1.4 % at 700; 33 % at 300, as docs/methods.md#small-samples says), second digit 0.9 % at
 * 1100 (1.7 % at 1000), first two 0.3 % at 2000 (0.8 % at 1900, 2.0 % at 1800; 2000 keeps
 * a margin). The unit tests re-check each value. For the last two digits, 500 = the N at
 * which every expected count reaches 5, the usual validity condition of chi-square
 * (docs/methods.md#conformity-figures). All are far above the 15–60 amounts of one return, so the fixed
 * thresholds never judge a single return.
 */
export const MIN_N_FOR_CONFORMITY: Readonly<Record<DigitTestName, number>> = {
  firstDigit: 800,
  secondDigit: 1100,
  firstTwo: 2000,
  lastTwo: 500,
};

/** A goodness-of-fit verdict at the 5 % and 1 % levels. */
export type GoodnessVerdict = 'not_rejected' | 'rejected_5' | 'rejected_1';

/**
 * Critical values of the KS statistic D and of Kuiper's V, times sqrt(N), at 5 % and 1 %.
 * First digit: the digit-specific values of Morrow 2014 (from memory; reproduced by
 * simulation in tests/unit/digits/stats.test.ts): KS 1.148 / 1.420, Kuiper 1.321 / 1.579.
 * Other tests: the asymptotic values for a continuous distribution, KS 1.358 / 1.628
 * (the Kolmogorov distribution; the test computes them from its series) and Kuiper
 * 1.747 / 2.001 (Stephens 1970, JRSS-B 32:115, from memory; the test computes them from
 * Kuiper's asymptotic series). For digits these are conservative (a discrete law has
 * smaller critical values), so a rejection stands.
 */
export const KS_KUIPER_CRITICAL: Readonly<Record<DigitTestName, { ks: readonly [number, number]; kuiper: readonly [number, number] }>> = {
  firstDigit: { ks: [1.148, 1.42], kuiper: [1.321, 1.579] },
  secondDigit: { ks: [1.358, 1.628], kuiper: [1.747, 2.001] },
  firstTwo: { ks: [1.358, 1.628], kuiper: [1.747, 2.001] },
  lastTwo: { ks: [1.358, 1.628], kuiper: [1.747, 2.001] },
};

/** Verdict of a KS or Kuiper statistic for n amounts against [5 %, 1 %] critical values (x sqrt N). */
export function goodnessVerdict(stat: number, n: number, critical: readonly [number, number]): GoodnessVerdict {
  const scaled = stat * Math.sqrt(n);
  return scaled > critical[1] ? 'rejected_1' : scaled > critical[0] ? 'rejected_5' : 'not_rejected';
}

/** Z at 5 % and 1 % (two-sided), Nigrini 2012 after Fleiss 1981 (docs/methods.md#conformity-figures). */
export const Z_CRITICAL = { p05: 1.96, p01: 2.57 } as const;

/** All figures of one digit test. Numbers are null when the test has no amounts. */
export interface DigitTestResult {
  /** Amounts the test took. */
  n: number;
  /** Counts in report order (1..9, 0..9, 10..99, 00..99). */
  counts: number[];
  /** Expected proportions, same order. */
  expected: number[];
  /** Mean absolute deviation (1/K) sum |AP - EP|. */
  mad: number | null;
  /** Conformity level (MAD thresholds; last two by chi-square p), or too_few. */
  conformity: Conformity;
  /** Pearson chi-square sum (AC - EC)^2 / EC. */
  chiSquare: number | null;
  /** Degrees of freedom, K - 1. */
  df: number;
  /** Upper-tail p-value of chiSquare with df degrees of freedom. */
  pValue: number | null;
  /** Every expected count >= 5 (the usual validity condition of the chi-square p-value). */
  chiSquareValid: boolean;
  /** Kolmogorov–Smirnov D = max_k |sum_{i<=k} (AP_i - EP_i)|. */
  ks: number | null;
  /** Kuiper V = D+ + D-. */
  kuiper: number | null;
  /** KS verdict against the critical values of {@link KS_KUIPER_CRITICAL} (null: no amounts). */
  ksVerdict: GoodnessVerdict | null;
  /** Kuiper verdict against the critical values of {@link KS_KUIPER_CRITICAL} (null: no amounts). */
  kuiperVerdict: GoodnessVerdict | null;
  /** Sum of squared deviations sum (100 AP - 100 EP)^2 (Kossovsky 2014). */
  ssd: number | null;
  /** Z per bin with continuity correction, same order as counts. */
  z: (number | null)[];
}

/**
 * Z for one digit (Nigrini 2012 after Fleiss 1981; docs/methods.md#conformity-figures):
 * Z = (|AP - EP| - 1/(2N)) / sqrt(EP (1 - EP) / N), the 1/(2N) term dropped when it
 * exceeds |AP - EP|.
 *
 * @param ap actual proportion
 * @param ep expected proportion
 * @param n number of amounts, > 0
 * @returns Z >= 0
 */
export function zStatistic(ap: number, ep: number, n: number): number {
  const diff = Math.abs(ap - ep);
  const correction = 1 / (2 * n);
  const num = correction > diff ? diff : diff - correction;
  return num / Math.sqrt((ep * (1 - ep)) / n);
}

/**
 * MAD = (1/K) sum_i |AP_i - EP_i| (Nigrini 2012; docs/methods.md#conformity-figures).
 *
 * @param counts counts in report order
 * @param expected expected proportions, same order and length
 * @returns the MAD, NaN when all counts are zero
 */
export function meanAbsoluteDeviation(counts: ArrayLike<number>, expected: ArrayLike<number>): number {
  let n = 0;
  for (let i = 0; i < counts.length; i++) n += counts[i];
  if (n === 0) return NaN;
  let sum = 0;
  for (let i = 0; i < counts.length; i++) sum += Math.abs(counts[i] / n - expected[i]);
  return sum / counts.length;
}

/**
 * Conformity level of a test from its MAD (or, for the last two digits, its p-value).
 *
 * @param test the digit test
 * @param n amounts the test took
 * @param mad its MAD
 * @param pValue its chi-square p-value (used for lastTwo only)
 * @returns the level, `too_few` below {@link MIN_N_FOR_CONFORMITY}
 */
export function conformityOf(test: DigitTestName, n: number, mad: number, pValue: number): Conformity {
  if (n < MIN_N_FOR_CONFORMITY[test]) return 'too_few';
  if (test === 'lastTwo') {
    const [close, acceptable, marginal] = LAST_TWO_P_THRESHOLDS;
    if (pValue >= close) return 'close';
    if (pValue >= acceptable) return 'acceptable';
    if (pValue >= marginal) return 'marginal';
    return 'nonconformity';
  }
  const [close, acceptable, marginal] = MAD_THRESHOLDS[test];
  if (mad <= close) return 'close';
  if (mad <= acceptable) return 'acceptable';
  if (mad <= marginal) return 'marginal';
  return 'nonconformity';
}

/**
 * Evaluate one digit test from its counts.
 *
 * @param test the digit test
 * @param counts counts in report order (length K of the test)
 * @param expected expected proportions (default: Benford / uniform for that test)
 * @returns every figure of the test
 */
export function evaluateDigitTest(test: DigitTestName, counts: ArrayLike<number>, expected: ArrayLike<number> = EXPECTED[test]): DigitTestResult {
  const k = BIN_COUNT[test];
  if (counts.length !== k || expected.length !== k) {
    throw new RangeError(`${test} needs ${k} counts and ${k} expected proportions`);
  }
  let n = 0;
  for (let i = 0; i < k; i++) n += counts[i];
  const countList = Array.from(counts);
  const expectedList = Array.from(expected);
  const df = k - 1;
  let chiSquareValid = n > 0;
  for (let i = 0; i < k; i++) if (n * expected[i] < 5) chiSquareValid = false;
  if (n === 0) {
    return {
      n,
      counts: countList,
      expected: expectedList,
      mad: null,
      conformity: 'too_few',
      chiSquare: null,
      df,
      pValue: null,
      chiSquareValid,
      ks: null,
      kuiper: null,
      ksVerdict: null,
      kuiperVerdict: null,
      ssd: null,
      z: new Array<number | null>(k).fill(null),
    };
  }
  let madSum = 0;
  let chi = 0;
  let cum = 0;
  let dPlus = 0;
  let dMinus = 0;
  let ssd = 0;
  const z = new Array<number | null>(k);
  for (let i = 0; i < k; i++) {
    const ap = counts[i] / n;
    const ep = expected[i];
    const diff = ap - ep;
    madSum += Math.abs(diff);
    const ec = n * ep;
    chi += ((counts[i] - ec) * (counts[i] - ec)) / ec;
    cum += diff;
    if (cum > dPlus) dPlus = cum;
    if (-cum > dMinus) dMinus = -cum;
    ssd += 10000 * diff * diff;
    z[i] = zStatistic(ap, ep, n);
  }
  const mad = madSum / k;
  const pValue = chiSquareSurvival(chi, df);
  return {
    n,
    counts: countList,
    expected: expectedList,
    mad,
    conformity: conformityOf(test, n, mad, pValue),
    chiSquare: chi,
    df,
    pValue,
    chiSquareValid,
    ks: Math.max(dPlus, dMinus),
    kuiper: dPlus + dMinus,
    ksVerdict: goodnessVerdict(Math.max(dPlus, dMinus), n, KS_KUIPER_CRITICAL[test].ks),
    kuiperVerdict: goodnessVerdict(dPlus + dMinus, n, KS_KUIPER_CRITICAL[test].kuiper),
    ssd,
    z,
  };
}
