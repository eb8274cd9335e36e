/**
 * Seeded sample generators shared by the digit-engine tests (not a test file itself).
 */

import { mulberry32 } from '../../../shared/digits';

/**
 * Amounts whose significant digits follow Benford's law: log-uniform over [10, 10^6)
 * (whole decades, so P(first digit d) = log10(1 + 1/d); math fact), rounded to cents.
 * Rounding to cents moves a first digit only for amounts within 0.005 of a power of ten,
 * a negligible share.
 *
 * @param seed generator seed
 * @param n how many amounts
 * @returns amounts as numbers with at most 2 decimals
 */
export function benfordAmounts(seed: number, n: number): number[] {
  const rnd = mulberry32(seed);
  const out: number[] = [];
  for (let i = 0; i < n; i++) out.push(Math.round(Math.pow(10, 1 + 5 * rnd()) * 100) / 100);
  return out;
}

/**
 * The model of invented amounts used to measure the flag rate (documented in the report
 * and in size-aware.test.ts): a person making up expense lines picks an amount "at random"
 * between 100 and 10 000 — uniform on [100, 10 000), rounded to cents. Its first digits are
 * uniform (each 1/9; math fact: each digit covers 100 of the first decade and 1000 of the
 * second), the classic shape of invented numbers, which have too few leading 1s and too many
 * 7s, 8s and 9s (Hill 1988, "Random-number guessing and the first digit phenomenon",
 * Psychological Reports; from memory).
 *
 * @param seed generator seed
 * @param n how many amounts
 * @returns amounts as numbers with at most 2 decimals
 */
export function inventedAmounts(seed: number, n: number): number[] {
  const rnd = mulberry32(seed);
  const out: number[] = [];
  for (let i = 0; i < n; i++) out.push(Math.round((100 + 9900 * rnd()) * 100) / 100);
  return out;
}

/**
 * First significant digit of a positive decimal string, for independent reference counts.
 *
 * @param text digits, optionally with a point
 * @returns 1..9
 */
export function firstDigitOfText(text: string): number {
  const m = /[1-9]/.exec(text);
  if (!m) throw new Error(`no significant digit in ${text}`);
  return Number(m[0]);
}
