/**
 * The size-aware figure: is this MAD unusual for a sample of this size?
 *
 * docs/methods.md#small-samples: one return has 15–60 amounts, and under perfect conformity
 * its expected first-digit MAD (about 0.2349 / sqrt(N), 0.043 at N = 30) is three times the
 * 0.015 "nonconformity" line, so the fixed thresholds would fail nearly every typical return.
 * Instead the observed MAD is compared with its own distribution under conformity for the
 * sample's N (after Barney & Schulzke 2016, Journal of Forensic Accounting Research):
 *
 *   excess MAD = MAD - E[MAD | N],   z = excess MAD / SD[MAD | N].
 *
 * E[MAD | N] is exact: MAD = (1/K) sum_i |X_i/N - p_i| with X_i ~ Binomial(N, p_i), and
 * De Moivre's closed form (Diaconis & Zabell 1991, Statistical Science 6(3), "Closed form
 * summation for classical distributions") gives
 *   E|X - Np| = 2 m C(N, m) p^m (1 - p)^(N - m + 1),   m = floor(Np) + 1.
 * SD[MAD | N] has no simple closed form (the X_i are dependent); it comes from a seeded
 * simulation computed once and kept as a table (size-aware-table.ts) up to N = 2000, and
 * from the normal approximation beyond (see {@link asymptoticMadSpread}).
 *
 * Verdict cut-offs (product choice, no published source):
 *   z < 2        within_expected
 *   2 <= z < 3   elevated
 *   z >= 3       high
 *   too_few      fewer amounts than {@link SIZE_AWARE_MIN_N}.
 * Measured false-alarm rates (share of exactly conforming samples reaching z >= 2 / z >= 3;
 * seeded simulation, 20 000 samples per N, N = 15, 20, 30, 60, 100, 300, 1000, 5000):
 *   first digit  3.0–3.3 % / 0.3–0.5 %     second digit  2.8–3.3 % / 0.2–0.4 %
 *   first two    1.9–2.7 % / 0.1–0.3 %     last two      1.8–3.3 % / 0.1–0.5 % (N >= 20)
 * (A normal variable passes z = 2 2.3 % of the time; the MAD's right skew makes that a little
 * more for the first and second digit.) Invented amounts (uniform on [100, 10 000), first
 * digits uniform) are flagged elevated or high in 48 % of returns of 20 amounts, 67 % at 30
 * and 95 % at 60 (tests/unit/digits/size-aware.test.ts).
 */

import { BIN_COUNT, DIGIT_TESTS, EXPECTED, type DigitTestName } from './expected';
import { mulberry32 } from './random';
import { MAD_SPREAD_TABLE } from './size-aware-table';
import { logChoose } from './stats';

// Math functions bound once: a global `Math` lookup in a hot loop is slow under jest's vm
// sandbox (about 150 ns a call), and the local binding costs nothing under plain node.
const { abs } = Math;

/** Size-aware verdict of one set of amounts. */
export type SizeAwareVerdict = 'within_expected' | 'elevated' | 'high' | 'too_few';

/** z at or above which the MAD is `elevated` (product choice, no source; see module comment). */
export const ELEVATED_Z = 2;
/** z at or above which the MAD is `high` (product choice, no source; see module comment). */
export const HIGH_Z = 3;

/**
 * Fewest amounts for a size-aware verdict (product choice, no source): 15 for the first and
 * second digit — the smallest return the office expects; 50 for first two and last two
 * digits, whose 90 or 100 bins are mostly empty below that, so that the MAD then measures
 * little more than how many amounts share a bin.
 */
export const SIZE_AWARE_MIN_N: Readonly<Record<DigitTestName, number>> = {
  firstDigit: 15,
  secondDigit: 15,
  firstTwo: 50,
  lastTwo: 50,
};

/** The size-aware figure of one digit test. Numbers are null when the test has no amounts. */
export interface SizeAwareResult {
  /** The digit test the figure is for. */
  test: DigitTestName;
  /** Amounts the test took. */
  n: number;
  /** Observed MAD. */
  mad: number | null;
  /** E[MAD | N] under conformity (exact). */
  expectedMad: number | null;
  /** SD[MAD | N] under conformity (simulated table / normal approximation). */
  sdMad: number | null;
  /** MAD - E[MAD | N]. */
  excessMad: number | null;
  /** excessMad / sdMad. */
  zScore: number | null;
  /** Verdict from zScore and the cut-offs above. */
  verdict: SizeAwareVerdict;
}

/**
 * E|X - Np| for X ~ Binomial(N, p), De Moivre's closed form (see module comment).
 *
 * @param n trials N >= 0
 * @param p success probability, 0 < p < 1
 * @returns the mean absolute deviation of the count from its mean
 */
export function binomialMeanAbsoluteDeviation(n: number, p: number): number {
  if (n === 0) return 0;
  const m = Math.floor(n * p) + 1;
  if (m > n) return 0;
  return 2 * m * Math.exp(logChoose(n, m) + m * Math.log(p) + (n - m + 1) * Math.log1p(-p));
}

const meanCache: Record<DigitTestName, Map<number, number>> = {
  firstDigit: new Map(),
  secondDigit: new Map(),
  firstTwo: new Map(),
  lastTwo: new Map(),
};
const MAX_CACHE = 10_000;

/**
 * Expected MAD under exact conformity for a sample of n amounts:
 * E[MAD | n] = (1/K) sum_i E|X_i - n p_i| / n (exact; cached per n).
 *
 * @param test the digit test
 * @param n amounts, n >= 1
 * @returns E[MAD | n]
 */
export function expectedMad(test: DigitTestName, n: number): number {
  const cache = meanCache[test];
  const hit = cache.get(n);
  if (hit !== undefined) return hit;
  const p = EXPECTED[test];
  let sum = 0;
  if (test === 'lastTwo') sum = p.length * binomialMeanAbsoluteDeviation(n, p[0]);
  else for (let i = 0; i < p.length; i++) sum += binomialMeanAbsoluteDeviation(n, p[i]);
  const value = sum / n / p.length;
  if (cache.size >= MAX_CACHE) cache.clear();
  cache.set(n, value);
  return value;
}

const asymptoticUnit: Partial<Record<DigitTestName, number>> = {};

/**
 * SD of the MAD under conformity by the normal approximation: the deviations
 * D_i = AP_i - p_i are jointly normal with var p_i(1 - p_i)/N and correlation
 * rho_ij = -sqrt(p_i p_j / ((1 - p_i)(1 - p_j))) (multinomial covariance), and for a
 * zero-mean bivariate normal Var|X| = s^2 (1 - 2/pi),
 * Cov(|X|, |Y|) = (2/pi) s_x s_y (sqrt(1 - rho^2) + rho asin(rho) - 1)
 * (folded-normal moments, from memory; the tests check this against simulation).
 *
 * @param test the digit test
 * @param n amounts, n >= 1
 * @returns approximate SD[MAD | n]; accurate to about 1 % from n = 1000 on
 */
export function asymptoticMadSpread(test: DigitTestName, n: number): number {
  let unit = asymptoticUnit[test];
  if (unit === undefined) {
    const p = EXPECTED[test];
    const k = p.length;
    let v = 0;
    for (let i = 0; i < k; i++) {
      const si = Math.sqrt(p[i] * (1 - p[i]));
      v += si * si * (1 - 2 / Math.PI);
      for (let j = 0; j < k; j++) {
        if (j === i) continue;
        const sj = Math.sqrt(p[j] * (1 - p[j]));
        const rho = -Math.sqrt((p[i] * p[j]) / ((1 - p[i]) * (1 - p[j])));
        v += (2 / Math.PI) * si * sj * (Math.sqrt(1 - rho * rho) + rho * Math.asin(rho) - 1);
      }
    }
    unit = Math.sqrt(v) / k;
    asymptoticUnit[test] = unit;
  }
  return unit / Math.sqrt(n);
}

/**
 * SD of the MAD under exact conformity for n amounts: interpolated in the seeded
 * simulation table (sqrt(n) * SD, linear in n) up to its last N; beyond, the normal
 * approximation times a correction that starts at the table's last ratio and fades as
 * 1/n, so the two join without a step.
 *
 * @param test the digit test
 * @param n amounts, n >= 1
 * @returns SD[MAD | n]
 */
export function madSpread(test: DigitTestName, n: number): number {
  const grid = MAD_SPREAD_TABLE.n;
  const scaled = MAD_SPREAD_TABLE[test];
  const last = grid.length - 1;
  if (n >= grid[last]) {
    const ratio = scaled[last] / Math.sqrt(grid[last]) / asymptoticMadSpread(test, grid[last]);
    return asymptoticMadSpread(test, n) * (1 + (ratio - 1) * (grid[last] / n));
  }
  if (n <= grid[0]) return scaled[0] / Math.sqrt(n);
  let lo = 0;
  let hi = last;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (grid[mid] <= n) lo = mid;
    else hi = mid;
  }
  const t = (n - grid[lo]) / (grid[hi] - grid[lo]);
  return (scaled[lo] + t * (scaled[hi] - scaled[lo])) / Math.sqrt(n);
}

/**
 * z-score of an observed MAD against its distribution under conformity for n amounts.
 *
 * @param test the digit test
 * @param n amounts the test took, n >= 1
 * @param mad the observed MAD
 * @returns (mad - E[MAD | n]) / SD[MAD | n]
 */
export function sizeAwareZ(test: DigitTestName, n: number, mad: number): number {
  const sd = madSpread(test, n);
  return sd > 1e-9 ? (mad - expectedMad(test, n)) / sd : 0;
}

/**
 * Verdict from a size-aware z-score.
 *
 * @param test the digit test (for its minimum N)
 * @param n amounts the test took
 * @param z the size-aware z-score
 * @returns the verdict, `too_few` below {@link SIZE_AWARE_MIN_N}
 */
export function sizeAwareVerdict(test: DigitTestName, n: number, z: number): SizeAwareVerdict {
  if (n < SIZE_AWARE_MIN_N[test]) return 'too_few';
  if (z >= HIGH_Z) return 'high';
  if (z >= ELEVATED_Z) return 'elevated';
  return 'within_expected';
}

/**
 * The full size-aware figure of one test.
 *
 * @param test the digit test
 * @param n amounts the test took
 * @param mad the observed MAD (ignored when n = 0)
 * @returns expected MAD, its SD, excess MAD, z-score and verdict
 */
export function sizeAwareFigure(test: DigitTestName, n: number, mad: number | null): SizeAwareResult {
  if (n === 0 || mad === null || Number.isNaN(mad)) {
    return { test, n, mad: null, expectedMad: null, sdMad: null, excessMad: null, zScore: null, verdict: 'too_few' };
  }
  const expected = expectedMad(test, n);
  const sd = madSpread(test, n);
  const excess = mad - expected;
  // The MAD can be fixed for a given n (last two digits at n = 1: always 0.0198); no spread, no z.
  const z = sd > 1e-9 ? excess / sd : 0;
  return {
    test,
    n,
    mad,
    expectedMad: expected,
    sdMad: sd,
    excessMad: excess,
    zScore: z,
    verdict: sizeAwareVerdict(test, n, z),
  };
}

/** Mean and SD of the MAD over simulated conforming samples. */
export interface MadMoments {
  /** Mean MAD over the draws. */
  mean: number;
  /** Sample SD of the MAD over the draws. */
  sd: number;
}

/**
 * Seed of the simulation for one N of the table: fixed, so the table can be rebuilt and
 * checked exactly (a unit test rebuilds a few rows).
 *
 * @param n sample size
 * @returns the seed
 */
export function simulationSeed(n: number): number {
  return (0x5eed0000 ^ Math.imul(n, 2654435761)) >>> 0;
}

/**
 * Walker's alias method (Walker 1977, ACM TOMS 3(3); Vose 1991, IEEE TSE 17(9)): draws from
 * a discrete distribution with one uniform number and one comparison, about ten times faster
 * than evaluating 10^(1 + U) for every simulated digit.
 *
 * @param probabilities the distribution (sums to 1)
 * @param rnd uniform numbers in [0, 1)
 * @returns a function giving 0-based bin indices with those probabilities
 */
export function aliasSampler(probabilities: ArrayLike<number>, rnd: () => number): () => number {
  const k = probabilities.length;
  const prob = new Float64Array(k);
  const alias = new Int32Array(k);
  const scaled = Array.from(probabilities, (p) => p * k);
  const small: number[] = [];
  const large: number[] = [];
  scaled.forEach((p, i) => (p < 1 ? small : large).push(i));
  while (small.length > 0 && large.length > 0) {
    const s = small.pop() as number;
    const l = large.pop() as number;
    prob[s] = scaled[s];
    alias[s] = l;
    scaled[l] = scaled[l] + scaled[s] - 1;
    (scaled[l] < 1 ? small : large).push(l);
  }
  for (const i of large) prob[i] = 1;
  for (const i of small) prob[i] = 1; // only rounding leftovers
  return () => {
    const x = rnd() * k;
    const i = x | 0;
    return x - i < prob[i] ? i : alias[i];
  };
}

/**
 * Simulate the MAD of samples of n amounts drawn exactly from Benford's law: first two
 * digits 10..99 with P(m) = log10(1 + 1/m), the first and second digits being those of m
 * (so all three tests see one Benford sample), and, from a second stream, uniform last two
 * digits. Digits are drawn directly; no amounts are formed.
 *
 * @param n sample size, n >= 1
 * @param draws number of simulated samples
 * @param seed seed (default {@link simulationSeed}(n))
 * @returns the MAD of every simulated sample, per test
 */
export function simulateMads(n: number, draws: number, seed: number = simulationSeed(n)): Record<DigitTestName, Float64Array> {
  const drawTwo = aliasSampler(EXPECTED.firstTwo, mulberry32(seed));
  const rndLast = mulberry32(seed ^ 0x9e3779b9);
  const cFirst = new Float64Array(10);
  const cSecond = new Float64Array(10);
  const cTwo = new Float64Array(100);
  const cLast = new Float64Array(100);
  const out: Record<DigitTestName, Float64Array> = {
    firstDigit: new Float64Array(draws),
    secondDigit: new Float64Array(draws),
    firstTwo: new Float64Array(draws),
    lastTwo: new Float64Array(draws),
  };
  const pF = EXPECTED.firstDigit;
  const pS = EXPECTED.secondDigit;
  const pT = EXPECTED.firstTwo;
  for (let r = 0; r < draws; r++) {
    cFirst.fill(0);
    cSecond.fill(0);
    cTwo.fill(0);
    cLast.fill(0);
    for (let i = 0; i < n; i++) {
      const f2 = drawTwo() + 10;
      cTwo[f2]++;
      cFirst[(f2 / 10) | 0]++;
      cSecond[f2 % 10]++;
      cLast[(rndLast() * 100) | 0]++;
    }
    let m = 0;
    for (let d = 1; d <= 9; d++) m += abs(cFirst[d] / n - pF[d - 1]);
    out.firstDigit[r] = m / 9;
    m = 0;
    for (let d = 0; d <= 9; d++) m += abs(cSecond[d] / n - pS[d]);
    out.secondDigit[r] = m / 10;
    m = 0;
    for (let d = 10; d <= 99; d++) m += abs(cTwo[d] / n - pT[d - 10]);
    out.firstTwo[r] = m / 90;
    m = 0;
    for (let d = 0; d <= 99; d++) m += abs(cLast[d] / n - 0.01);
    out.lastTwo[r] = m / 100;
  }
  return out;
}

/**
 * Mean and SD of the MAD under exact conformity, by seeded simulation ({@link simulateMads}).
 *
 * @param n sample size, n >= 1
 * @param draws number of simulated samples
 * @param seed seed (default {@link simulationSeed}(n))
 * @returns mean and SD of the MAD for each test
 */
export function simulateMadMoments(n: number, draws: number, seed: number = simulationSeed(n)): Record<DigitTestName, MadMoments> {
  const mads = simulateMads(n, draws, seed);
  const out = {} as Record<DigitTestName, MadMoments>;
  for (const t of DIGIT_TESTS) {
    const xs = mads[t];
    let mean = 0;
    for (let i = 0; i < draws; i++) mean += xs[i];
    mean /= draws;
    let ss = 0;
    for (let i = 0; i < draws; i++) ss += (xs[i] - mean) * (xs[i] - mean);
    out[t] = { mean, sd: Math.sqrt(ss / (draws - 1)) };
  }
  return out;
}

/** Sample sizes of the table: every N to 60 (one return), then coarser up to 2000. */
export function madSpreadGrid(): number[] {
  const grid: number[] = [];
  for (let n = 1; n <= 60; n++) grid.push(n);
  for (let n = 62; n <= 100; n += 2) grid.push(n);
  for (let n = 110; n <= 300; n += 10) grid.push(n);
  for (let n = 325; n <= 500; n += 25) grid.push(n);
  for (let n = 550; n <= 1000; n += 50) grid.push(n);
  for (let n = 1100; n <= 2000; n += 100) grid.push(n);
  return grid;
}

/** Draws per table row. Standard error of an SD estimate is about SD / sqrt(2 * draws), 0.5 %. */
export const TABLE_DRAWS = 20_000;

/**
 * One table row: sqrt(n) * SD[MAD | n] per test, rounded to 5 significant digits.
 *
 * @param n sample size
 * @param draws simulated samples (default {@link TABLE_DRAWS})
 * @returns the scaled SD per test
 */
export function madSpreadTableRow(n: number, draws: number = TABLE_DRAWS): Record<DigitTestName, number> {
  const m = simulateMadMoments(n, draws);
  const row = {} as Record<DigitTestName, number>;
  for (const t of DIGIT_TESTS) row[t] = Number((m[t].sd * Math.sqrt(n)).toPrecision(5));
  return row;
}

/**
 * Source text of size-aware-table.ts (how the table was made; run once, takes ~1 minute):
 *   npx tsx -e "import('./shared/digits/size-aware').then(m => process.stdout.write(m.renderMadSpreadTable()))" > shared/digits/size-aware-table.ts
 *
 * @param draws simulated samples per row (default {@link TABLE_DRAWS})
 * @returns TypeScript source of the table module
 */
export function renderMadSpreadTable(draws: number = TABLE_DRAWS): string {
  const grid = madSpreadGrid();
  const cols: Record<DigitTestName, number[]> = { firstDigit: [], secondDigit: [], firstTwo: [], lastTwo: [] };
  for (const n of grid) {
    const row = madSpreadTableRow(n, draws);
    for (const t of DIGIT_TESTS) cols[t].push(row[t]);
  }
  const list = (xs: number[]) => {
    const lines: string[] = [];
    for (let i = 0; i < xs.length; i += 10) lines.push(`    ${xs.slice(i, i + 10).join(', ')},`);
    return lines.join('\n');
  };
  return `/**
 * sqrt(N) * SD[MAD | N] under exact conformity, by test, from a seeded simulation
 * (${draws} samples per N; see simulateMadMoments and renderMadSpreadTable in
 * size-aware.ts, which generated this file). Generated: do not edit by hand.
 * K of each test: ${DIGIT_TESTS.map((t) => `${t} ${BIN_COUNT[t]}`).join(', ')}.
 */

/** The table: sample sizes n, and per test sqrt(n) * SD of the MAD at those n. */
export const MAD_SPREAD_TABLE: {
  readonly n: readonly number[];
  readonly firstDigit: readonly number[];
  readonly secondDigit: readonly number[];
  readonly firstTwo: readonly number[];
  readonly lastTwo: readonly number[];
} = {
  n: [
${list(grid)}
  ],
${DIGIT_TESTS.map((t) => `  ${t}: [\n${list(cols[t])}\n  ],`).join('\n')}
};
`;
}
