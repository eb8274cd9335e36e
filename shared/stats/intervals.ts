/**
 * 95 % (or other) intervals for the Programme figures (docs/methods.md#programme-outcomes):
 * a rate (Wilson score interval), a mean (Student's t), and the lift of one group over another
 * (Katz's log method for a ratio of two rates; the delta method on the log for a ratio of two
 * means). Each answer names its method so the screen and the API can say which was used.
 */
import { normalQuantile, studentTQuantile } from './distributions';

/** An estimate with its interval; `low`/`high` are null when the method cannot give one (no data, zero counts). */
export interface Interval {
  estimate: number | null;
  low: number | null;
  high: number | null;
  /** The method's name in words, e.g. "Wilson score interval". */
  method: string;
}

export const WILSON = 'Wilson score interval';
export const T_INTERVAL = "Student's t interval";
export const KATZ_LOG = 'Katz log method (ratio of two rates)';
export const DELTA_LOG_RATIO = 'delta method on the log ratio of two means';

/**
 * Wilson (1927) score interval for a proportion x/n, without continuity correction
 * (Newcombe 1998, Statistics in Medicine 17:857, method 3).
 */
export function wilsonInterval(x: number, n: number, level = 0.95): Interval {
  if (!Number.isInteger(x) || !Number.isInteger(n) || x < 0 || n < 0 || x > n)
    throw new RangeError(`wilsonInterval needs whole numbers 0 ≤ x ≤ n (got x=${x}, n=${n})`);
  if (n === 0) return { estimate: null, low: null, high: null, method: WILSON };
  const z = normalQuantile(1 - (1 - level) / 2);
  const p = x / n;
  const z2 = z * z;
  const centre = (p + z2 / (2 * n)) / (1 + z2 / n);
  const half = (z * Math.sqrt((p * (1 - p)) / n + z2 / (4 * n * n))) / (1 + z2 / n);
  return { estimate: p, low: Math.max(0, centre - half), high: Math.min(1, centre + half), method: WILSON };
}

/** Mean, sample standard deviation and count of a list of numbers. */
export function meanSd(values: readonly number[]): { n: number; mean: number; sd: number } {
  const n = values.length;
  if (n === 0) return { n, mean: NaN, sd: NaN };
  let s = 0;
  for (const v of values) s += v;
  const mean = s / n;
  let ss = 0;
  for (const v of values) ss += (v - mean) ** 2;
  return { n, mean, sd: n > 1 ? Math.sqrt(ss / (n - 1)) : NaN };
}

/** Student's t interval for a mean: mean ± t(1 − α/2, n − 1) · s / √n (needs n ≥ 2 for an interval). */
export function tInterval(values: readonly number[], level = 0.95): Interval {
  const { n, mean, sd } = meanSd(values);
  if (n === 0) return { estimate: null, low: null, high: null, method: T_INTERVAL };
  if (n < 2) return { estimate: mean, low: null, high: null, method: T_INTERVAL };
  const half = (studentTQuantile(1 - (1 - level) / 2, n - 1) * sd) / Math.sqrt(n);
  return { estimate: mean, low: mean - half, high: mean + half, method: T_INTERVAL };
}

/**
 * Ratio of two rates (x1/n1) ÷ (x2/n2) with Katz's log interval (Katz, Baptista, Azen and
 * Pike 1978, Biometrics 34:469): exp(ln R ± z · √(1/x1 − 1/n1 + 1/x2 − 1/n2)).
 * No interval when either count of events is 0 (the log is undefined).
 */
export function katzRatioInterval(x1: number, n1: number, x2: number, n2: number, level = 0.95): Interval {
  if (n1 === 0 || n2 === 0 || x2 === 0) return { estimate: null, low: null, high: null, method: KATZ_LOG };
  const r = x1 / n1 / (x2 / n2);
  if (x1 === 0) return { estimate: r, low: null, high: null, method: KATZ_LOG };
  const z = normalQuantile(1 - (1 - level) / 2);
  const se = Math.sqrt(1 / x1 - 1 / n1 + 1 / x2 - 1 / n2);
  return { estimate: r, low: r * Math.exp(-z * se), high: r * Math.exp(z * se), method: KATZ_LOG };
}

/**
 * Ratio of two means m1 ÷ m2 (positive amounts), interval from the delta method on the log:
 * Var(ln m) ≈ s² / (n m²), so exp(ln(m1/m2) ± z · √(s1²/(n1 m1²) + s2²/(n2 m2²))).
 * Needs two or more values in each group.
 */
export function logRatioOfMeansInterval(a: readonly number[], b: readonly number[], level = 0.95): Interval {
  const A = meanSd(a);
  const B = meanSd(b);
  if (A.n === 0 || B.n === 0 || !(B.mean > 0)) return { estimate: null, low: null, high: null, method: DELTA_LOG_RATIO };
  const r = A.mean / B.mean;
  if (A.n < 2 || B.n < 2 || !(A.mean > 0)) return { estimate: r, low: null, high: null, method: DELTA_LOG_RATIO };
  const z = normalQuantile(1 - (1 - level) / 2);
  const se = Math.sqrt((A.sd * A.sd) / (A.n * A.mean * A.mean) + (B.sd * B.sd) / (B.n * B.mean * B.mean));
  return { estimate: r, low: r * Math.exp(-z * se), high: r * Math.exp(z * se), method: DELTA_LOG_RATIO };
}
