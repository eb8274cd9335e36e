/**
 * Pooled digit figures: many amounts from one preparer's clients or one taxpayer's years
 * (docs/methods.md, "Scoring"). These rules keep the pooled test fair:
 *
 * - the return being scored is left out of its own pools (its figures would count twice);
 * - the pool is compared with the batch's own first-digit profile of the same line codes,
 *   weighted by the pool's mix of codes, not with Benford's law alone (a firm of landlords
 *   has other digits than a firm of shopkeepers, and that is ordinary);
 * - pools differ by more than multinomial chance (clients are people with habits), so the
 *   Pearson statistic is calibrated by a Dirichlet-multinomial model whose concentration is
 *   estimated from all pools of the batch (empirical Bayes): under it E[X^2] is
 *   df (n + alpha) / (1 + alpha), so X^2 (1 + alpha) / (n + alpha) is referred to
 *   chi-square(df) (Mosimann 1962, Biometrika 49; the moment estimate after Brier 1980,
 *   Biometrika 67). Small pools are thereby shrunk toward the batch; large ones speak for
 *   themselves;
 * - from profile version 3 on, a preparer's pool leaves the whole client out and is referred
 *   to random sets of as many of the batch's clients ({@link clientPoolNull}): a client's
 *   amounts hang together, so a pool varies like its clients, not like its amounts.
 *
 * The fixed published MAD thresholds (Nigrini 2012) are still shown for pools of at least
 * `pooledFixedThresholdMinN` amounts, but the strength follows the calibrated p-value.
 */
import { EXPECTED, evaluateDigitTest, sizeAwareFigure, type Conformity, type SizeAwareVerdict } from '../digits';
import { mulberry32 } from '../digits/random';
import { chiSquareSurvival } from '../digits/stats';
import { strengthFromP } from './calibration';

/** What a pool's digits say, and how strongly that points at its returns. */
export interface PooledDigits {
  n: number;
  mad: number | null;
  /** Fixed-threshold conformity of the first digit; 'too_few' below the pooled minimum. */
  conformity: Conformity;
  /** Size-aware verdict of the first digit (against Benford's law). */
  verdict: SizeAwareVerdict;
  zScore: number | null;
  /** 0–1 from the calibrated p-value. */
  strength: number;
  /** Which rule is shown: the fixed thresholds (large N) or the size-aware figure. */
  judgedBy: 'fixed' | 'size-aware' | 'none';
  /** Calibrated p-value against the batch's profile of the same line codes (null: too few). */
  p?: number | null;
  /** What chance is: the spread of random sets of as many of the batch's clients (version 3 on), else of amounts. */
  basis?: 'clients' | 'amounts';
}

/** First-digit counts (digits 1..9) per line code. */
export type CodeDigitCounts = Record<string, number[]>;

/** Fewest amounts in a pool before it is tested (about 5 expected in the rarest digit, 9: 0.046 × 110). */
export const POOL_MIN_N = 110;

/** Adds or subtracts per-code counts (for leaving a return out of its pool). */
export function combineCodeCounts(a: CodeDigitCounts, b: CodeDigitCounts, sign: 1 | -1): CodeDigitCounts {
  const out: CodeDigitCounts = {};
  for (const [code, c] of Object.entries(a)) out[code] = [...c];
  for (const [code, c] of Object.entries(b)) {
    const t = out[code] ?? new Array(9).fill(0);
    out[code] = t.map((x, i) => Math.max(0, x + sign * c[i]));
  }
  return out;
}

/** Totals over codes. */
export function totalCounts(byCode: CodeDigitCounts): number[] {
  const t = new Array(9).fill(0);
  for (const c of Object.values(byCode)) for (let i = 0; i < 9; i++) t[i] += c[i];
  return t;
}

/**
 * Expected first-digit proportions of a pool: the batch's profile of each line code (with
 * one Benford-shaped pseudo-amount per digit so an empty code is defined), weighted by how
 * many of the pool's amounts are on that code.
 */
export function expectedForPool(pool: CodeDigitCounts, batch: CodeDigitCounts): number[] {
  const e = new Array(9).fill(0);
  let n = 0;
  for (const [code, c] of Object.entries(pool)) {
    const k = c.reduce((s, x) => s + x, 0);
    if (!k) continue;
    const b = batch[code] ?? new Array(9).fill(0);
    const bn = b.reduce((s, x) => s + x, 0);
    for (let i = 0; i < 9; i++) e[i] += (k * (b[i] + 9 * EXPECTED.firstDigit[i])) / (bn + 9);
    n += k;
  }
  return n ? e.map((x) => x / n) : [...EXPECTED.firstDigit];
}

/** Pearson chi-square of counts against proportions. */
export function pearson(counts: readonly number[], expected: readonly number[]): number {
  const n = counts.reduce((s, x) => s + x, 0);
  let x2 = 0;
  for (let i = 0; i < counts.length; i++) {
    const ec = n * expected[i];
    if (ec > 0) x2 += ((counts[i] - ec) * (counts[i] - ec)) / ec;
  }
  return x2;
}

/**
 * Dirichlet-multinomial concentration alpha from many pools' Pearson statistics: each pool
 * gives phi_i = X_i^2 / df and, where phi_i > 1, alpha_i = (n_i − phi_i) / (phi_i − 1)
 * (from E[X^2] = df (n + alpha)/(1 + alpha)); the median over pools is taken (robust to the
 * few pools that really differ). Infinity (plain multinomial) when most pools show no extra
 * spread.
 *
 * @param pools each pool's size and Pearson statistic (pools below {@link POOL_MIN_N} are ignored)
 * @param df degrees of freedom (8 for first digits)
 */
export function estimateConcentration(pools: readonly { n: number; x2: number }[], df = 8): number {
  const alphas = pools
    .filter((p) => p.n >= POOL_MIN_N)
    .map((p) => {
      const phi = p.x2 / df;
      return phi <= 1 ? Infinity : Math.max(0, (p.n - phi) / (phi - 1));
    })
    .sort((a, b) => a - b);
  if (!alphas.length) return Infinity;
  return alphas[Math.floor(alphas.length / 2)];
}

/**
 * How a pool's Pearson statistic is referred to chance: the Dirichlet-multinomial
 * concentration of amounts (`alpha`, profile version 2), or the null of a preparer's pool
 * built from whole clients (`clients`, version 3 on; {@link clientPoolNull}).
 */
export type PoolNull = { alpha: number } | { scale: number; df: number };

/**
 * The taxpayers as lists of [code, counts] in code order, sorted by those lists: one order
 * (of taxpayers and of each one's codes) whatever order they were given in.
 */
function canonicalOrder(taxpayers: readonly CodeDigitCounts[]): [string, number[]][][] {
  const keyed = taxpayers.map((t) => {
    const entries = Object.keys(t)
      .sort()
      .map((code): [string, number[]] => [code, t[code]]);
    return { entries, key: entries.map(([code, c]) => `${code}:${c.join(',')}`).join(';') };
  });
  keyed.sort((a, b) => (a.key < b.key ? -1 : a.key > b.key ? 1 : 0));
  return keyed.map((k) => k.entries);
}

/**
 * The chance spread of a preparer's pool when clients, not amounts, are what a preparer
 * gets: a taxpayer's amounts hang together (the same rent and gifts every year, one
 * business's mix of costs), so a pool of 20 clients' 600 amounts varies like far fewer
 * independent amounts, and a small practice whose clients happen to share habits looks
 * unusual to a test that counts amounts. Null model: the preparer's clients are a random
 * set of the batch's taxpayers of the same size (a permutation of clients across
 * preparers). `draws` such sets are drawn (seeded), each pool's Pearson X² against its
 * expected profile ({@link expectedForPool}) is computed, and X² is approximated by
 * a·chi-square(ν) with the simulated mean m and variance v: a = v / (2m), ν = 2m² / v
 * (Satterthwaite 1946, Biometrics Bulletin 2:110, matching two moments of a scaled
 * chi-square), so the far tail, which a few hundred draws cannot reach, follows the fit.
 *
 * The draws do not depend on the order the taxpayers come in (they are put in one order of
 * their counts first): the database hands them over in whatever order its aggregate left
 * them, and the same batch must give the same null, whichever plan PostgreSQL chose.
 *
 * @param taxpayers each taxpayer's per-code first-digit counts in the batch, in any order
 * @param clients pool size in clients
 * @param batch the batch's per-code counts
 * @param draws random client sets
 * @param seed PRNG seed (the same context gives the same null)
 * @returns the fit, or null when there are too few taxpayers to draw from
 */
export function clientPoolNull(
  taxpayers: readonly CodeDigitCounts[],
  clients: number,
  batch: CodeDigitCounts,
  draws = 400,
  seed = 0x9001,
): { scale: number; df: number } | null {
  const t = taxpayers.length;
  if (clients < 1 || clients >= t || draws < 10) return null;
  const ordered = canonicalOrder(taxpayers);
  const rnd = mulberry32((seed ^ Math.imul(clients, 2654435761)) >>> 0);
  const idx = Array.from({ length: t }, (_, i) => i);
  const xs: number[] = [];
  for (let d = 0; d < draws; d++) {
    // A partial Fisher–Yates shuffle: the first `clients` indices are a uniform random set.
    const pool: CodeDigitCounts = {};
    for (let i = 0; i < clients; i++) {
      const j = i + Math.floor(rnd() * (t - i));
      const tmp = idx[i];
      idx[i] = idx[j];
      idx[j] = tmp;
      for (const [code, c] of ordered[idx[i]]) {
        const a = (pool[code] ??= new Array(9).fill(0));
        for (let k = 0; k < 9; k++) a[k] += c[k];
      }
    }
    const counts = totalCounts(pool);
    if (counts.reduce((s, x) => s + x, 0) < POOL_MIN_N) continue;
    xs.push(pearson(counts, expectedForPool(pool, batch)));
  }
  if (xs.length < 10) return null;
  const m = xs.reduce((s, x) => s + x, 0) / xs.length;
  const v = xs.reduce((s, x) => s + (x - m) * (x - m), 0) / (xs.length - 1);
  if (!(m > 0) || !(v > 0)) return null;
  return { scale: v / (2 * m), df: (2 * m * m) / v };
}

/** The calibrated p-value of a pool against its expected profile under the concentration alpha. */
export function poolPValue(counts: readonly number[], expected: readonly number[], alpha: number): number {
  const n = counts.reduce((s, x) => s + x, 0);
  const x2 = pearson(counts, expected);
  const inflate = Number.isFinite(alpha) ? (n + alpha) / (1 + alpha) : 1;
  return chiSquareSurvival(x2 / Math.max(1, inflate), 8);
}

/** The p-value of a pool's Pearson X² under its null ({@link PoolNull}). */
export function poolPValueUnder(counts: readonly number[], expected: readonly number[], nul: PoolNull): number {
  if ('alpha' in nul) return poolPValue(counts, expected, nul.alpha);
  return chiSquareSurvival(pearson(counts, expected) / nul.scale, nul.df);
}

/**
 * Judges a pool from its per-code first-digit counts.
 *
 * @param byCode the pool's counts per line code (the return already left out)
 * @param batch the batch's counts per line code
 * @param nul the Dirichlet-multinomial concentration estimated for this kind of pool (a number), or the pool's null as a {@link PoolNull}
 * @param fixedMinN pools this large also show the fixed thresholds
 * @param pStart, pFull the profile's p-value scale for strength
 */
export function judgePool(
  byCode: CodeDigitCounts,
  batch: CodeDigitCounts,
  nul: number | PoolNull,
  fixedMinN: number,
  pStart: number,
  pFull: number,
): PooledDigits & { firstDigitCounts: number[] } {
  const counts = totalCounts(byCode);
  const fd = evaluateDigitTest('firstDigit', counts);
  const sa = sizeAwareFigure('firstDigit', fd.n, fd.mad);
  const firstDigitCounts = counts;
  if (fd.n < POOL_MIN_N) {
    return { n: fd.n, mad: fd.mad, conformity: 'too_few', verdict: sa.verdict, zScore: sa.zScore, strength: 0, judgedBy: 'none', p: null, firstDigitCounts };
  }
  const pn: PoolNull = typeof nul === 'number' ? { alpha: nul } : nul;
  const p = poolPValueUnder(counts, expectedForPool(byCode, batch), pn);
  const basis = 'alpha' in pn ? ('amounts' as const) : ('clients' as const);
  const strength = strengthFromP(p, pStart, pFull);
  if (fd.n >= fixedMinN)
    return { n: fd.n, mad: fd.mad, conformity: fd.conformity, verdict: sa.verdict, zScore: sa.zScore, strength, judgedBy: 'fixed', p, basis, firstDigitCounts };
  return { n: fd.n, mad: fd.mad, conformity: 'too_few', verdict: sa.verdict, zScore: sa.zScore, strength, judgedBy: 'size-aware', p, basis, firstDigitCounts };
}
