/**
 * Calibrated evidence: p-values that are right for the sample in hand, their combination
 * within one return, and error control across a batch (docs/methods.md, "Scoring").
 *
 * Every pattern component of a return answers "how often would chance alone give a figure
 * at least this extreme?" (a p-value), under a null model named beside it; strength then
 * follows −log10 p, never a raw z.
 */
import { simulateMads } from '../digits/size-aware';
import { gammaQ } from '../digits/stats';

/**
 * Benjamini–Hochberg q-values (Benjamini & Hochberg 1995, JRSS-B 57(1), "Controlling the
 * false discovery rate"): with p-values sorted ascending p_(1) <= … <= p_(m),
 * q_(i) = min over j >= i of min(1, m p_(j) / j). Rejecting every q <= alpha keeps the
 * expected share of false discoveries at or below alpha (independent or positively
 * dependent tests).
 *
 * @param ps p-values in any order
 * @returns q-values in the same order as `ps`
 */
export function benjaminiHochberg(ps: readonly number[]): number[] {
  const m = ps.length;
  const order = ps.map((p, i) => [p, i] as const).sort((a, b) => a[0] - b[0]);
  const q = new Array<number>(m);
  let running = 1;
  for (let r = m - 1; r >= 0; r--) {
    const [p, i] = order[r];
    running = Math.min(running, (m * p) / (r + 1));
    q[i] = Math.min(1, running);
  }
  return q;
}

/**
 * Simes' combined p-value for the global null of k tests (Simes 1986, Biometrika 73(3), "An
 * improved Bonferroni procedure for multiple tests of significance"):
 * p = min over i of k p_(i) / i. Exact under independence, conservative under the positive
 * dependence of tests on the same figures (Sarkar 1998); never above Bonferroni's k min p.
 *
 * @param ps the tests' p-values (nulls are left out)
 * @returns the combined p-value, 1 when there are none
 */
export function simes(ps: readonly (number | null)[]): number {
  const xs = ps.filter((p): p is number => p !== null && Number.isFinite(p)).sort((a, b) => a - b);
  const k = xs.length;
  if (!k) return 1;
  let best = 1;
  for (let i = 0; i < k; i++) best = Math.min(best, (k * xs[i]) / (i + 1));
  return Math.min(1, best);
}

/**
 * P(X >= k) for X the number of successes in independent trials with probabilities
 * `probs` (the Poisson-binomial distribution), by the exact recursion over trials.
 *
 * @param k successes, integer
 * @param probs each trial's success probability
 * @returns the upper tail
 */
export function poissonBinomialUpperTail(k: number, probs: readonly number[]): number {
  if (k <= 0) return 1;
  if (k > probs.length) return 0;
  // dist[j] = P(j successes so far); only up to k is needed (k or more collapse into dist[k]).
  const dist = new Float64Array(k + 1);
  dist[0] = 1;
  for (const p0 of probs) {
    const p = Math.min(1, Math.max(0, p0));
    dist[k] = dist[k] + dist[k - 1] * p;
    for (let j = k - 1; j >= 1; j--) dist[j] = dist[j] * (1 - p) + dist[j - 1] * p;
    dist[0] *= 1 - p;
  }
  return Math.min(1, Math.max(0, dist[k]));
}

/**
 * P(X >= k) for X ~ Poisson(lambda): the regularised lower incomplete gamma P(k, lambda)
 * (the Poisson–gamma relation, a math fact).
 */
export function poissonUpperTail(k: number, lambda: number): number {
  if (k <= 0) return 1;
  if (lambda <= 0) return 0;
  return 1 - gammaQ(k, lambda);
}

/** Simulated conforming samples per sample size for the digit p-values. */
export const DIGIT_P_DRAWS = 4000;
/** Below this many simulated exceedances the p-value comes from the fitted tail instead. */
const MIN_EXCEEDANCES = 20;
/** Largest N simulated; beyond it (pools only) the gamma fit alone answers. */
const MAX_SIMULATED_N = 600;

interface NullMads {
  sorted: Float64Array;
  mean: number;
  variance: number;
}

const madCache: { firstDigit: Map<number, NullMads>; secondDigit: Map<number, NullMads> } = { firstDigit: new Map(), secondDigit: new Map() };

function nullMads(test: 'firstDigit' | 'secondDigit', n: number): NullMads {
  const hit = madCache[test].get(n);
  if (hit) return hit;
  // One seed per N (the size-aware table's), so the figure is the same on every machine and run.
  const sims = simulateMads(n, DIGIT_P_DRAWS, (0x0ca1b000 ^ Math.imul(n, 2654435761)) >>> 0);
  for (const t of ['firstDigit', 'secondDigit'] as const) {
    const xs = Float64Array.from(sims[t]).sort();
    let mean = 0;
    for (const x of xs) mean += x;
    mean /= xs.length;
    let ss = 0;
    for (const x of xs) ss += (x - mean) * (x - mean);
    madCache[t].set(n, { sorted: xs, mean, variance: ss / (xs.length - 1) });
  }
  return madCache[test].get(n)!;
}

/**
 * P(MAD >= observed | n amounts drawn exactly from Benford's law): the share of seeded
 * simulated conforming samples of the same size (shared/digits/size-aware.ts simulateMads,
 * {@link DIGIT_P_DRAWS} per N, cached) whose MAD is at least the observed one. Far in the
 * tail, where fewer than 20 simulated samples reach it, a gamma distribution with the
 * simulated mean and variance gives the tail instead (it follows the MAD's right skew; a
 * normal tail would understate p). Monte Carlo p-values count the observed sample itself:
 * (1 + exceedances) / (1 + draws) (Davison & Hinkley 1997, Bootstrap Methods, eq. 4.11).
 *
 * @param test first or second digit
 * @param n amounts in the test
 * @param mad the observed MAD
 * @returns the p-value, or null when the test has no amounts
 */
export function digitMadPValue(test: 'firstDigit' | 'secondDigit', n: number, mad: number | null): number | null {
  if (mad === null || n <= 0) return null;
  const sim = nullMads(test, Math.min(n, MAX_SIMULATED_N));
  let mean = sim.mean;
  let variance = sim.variance;
  if (n > MAX_SIMULATED_N) {
    // The MAD's mean and SD both shrink as 1/sqrt(N) (shared/digits/size-aware.ts).
    const f = Math.sqrt(MAX_SIMULATED_N / n);
    mean *= f;
    variance *= f * f;
  } else {
    const xs = sim.sorted;
    // Count of simulated MADs >= mad (binary search; small tolerance for float ties).
    let lo = 0;
    let hi = xs.length;
    const cut = mad - 1e-12;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (xs[mid] < cut) lo = mid + 1;
      else hi = mid;
    }
    const exceed = xs.length - lo;
    if (exceed >= MIN_EXCEEDANCES) return (1 + exceed) / (1 + xs.length);
  }
  if (variance <= 0) return mad > mean ? 0 : 1;
  const shape = (mean * mean) / variance;
  const scale = variance / mean;
  return Math.max(1e-12, gammaQ(shape, mad / scale));
}

/**
 * Strength 0–1 from a p-value: 0 at `pStart` or above, rising with −log10 p to 1 at `pFull`.
 *
 * @param p the p-value (null: no evidence)
 * @param pStart where evidence begins to count
 * @param pFull where it counts fully
 */
export function strengthFromP(p: number | null, pStart: number, pFull: number): number {
  if (p === null || !(p < pStart)) return 0;
  const s = (Math.log10(pStart) - Math.log10(Math.max(p, 1e-300))) / (Math.log10(pStart) - Math.log10(pFull));
  return s < 0 ? 0 : s > 1 ? 1 : s;
}

/**
 * A proportion shrunk toward a prior mean (empirical Bayes with a beta prior of the given
 * strength, i.e. prior counts a = mean × strength, b = (1 − mean) × strength): the posterior
 * mean (k + a) / (n + strength). Small pools lean on the batch; large ones on themselves.
 */
export function shrunkRate(k: number, n: number, priorMean: number, priorStrength: number): number {
  return (k + priorMean * priorStrength) / (n + priorStrength);
}

/** A p-value as evidence text shows it: "p = 0.003", "p = 2.1e-6". */
export function formatP(p: number, name = 'p'): string {
  if (p >= 0.001) return `${name} = ${p < 0.01 ? p.toFixed(4) : p.toFixed(3)}`;
  return `${name} = ${p.toExponential(1)}`;
}
