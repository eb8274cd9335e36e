/**
 * Pooled digit figures: many amounts from one preparer's clients, one taxpayer's years, or
 * one line code across a batch. Only here, with N large, do the fixed published MAD
 * thresholds apply (Nigrini 2012; METHODS.md "Small samples"); below
 * `pooledFixedThresholdMinN` amounts the size-aware figure decides instead, because the
 * fixed lines fail most honest samples of a few hundred (P(MAD > 0.015) = 0.33 at N = 300).
 */
import { DigitCounter, evaluateDigitTest, sizeAwareFigure, type Conformity, type SizeAwareVerdict } from '../digits';
import { clamp01 } from './format';

/** What a pool's digits say, and how strongly that points at its returns. */
export interface PooledDigits {
  n: number;
  mad: number | null;
  /** Fixed-threshold conformity of the first digit; 'too_few' below the pooled minimum. */
  conformity: Conformity;
  /** Size-aware verdict of the first digit. */
  verdict: SizeAwareVerdict;
  zScore: number | null;
  /** 0–1: 1 for nonconformity (or a high size-aware z), 0.5 for marginal (or elevated). */
  strength: number;
  /** Which rule decided: the fixed thresholds (large N) or the size-aware figure. */
  judgedBy: 'fixed' | 'size-aware' | 'none';
}

/**
 * Digit-pattern strength from a size-aware z: 0 below z = 2 (about 3 % of honest samples
 * reach it, shared/digits/size-aware.ts), rising to 1 at z = 4.5.
 */
export function strengthFromZ(z: number | null): number {
  return z === null ? 0 : clamp01((z - 2) / 2.5);
}

/**
 * Judges a pool from its first-digit counts (digits 1..9), so large pools can be counted in
 * SQL without bringing every amount into memory.
 */
export function judgeFirstDigitCounts(counts: ArrayLike<number>, fixedMinN: number): PooledDigits {
  const fd = evaluateDigitTest('firstDigit', counts);
  const sa = sizeAwareFigure('firstDigit', fd.n, fd.mad);
  if (fd.n >= fixedMinN) {
    const c = fd.conformity;
    const strength = c === 'nonconformity' ? 1 : c === 'marginal' ? 0.5 : 0;
    return { n: fd.n, mad: fd.mad, conformity: c, verdict: sa.verdict, zScore: sa.zScore, strength, judgedBy: 'fixed' };
  }
  if (sa.verdict === 'too_few') {
    return { n: fd.n, mad: fd.mad, conformity: 'too_few', verdict: 'too_few', zScore: null, strength: 0, judgedBy: 'none' };
  }
  return { n: fd.n, mad: fd.mad, conformity: 'too_few', verdict: sa.verdict, zScore: sa.zScore, strength: strengthFromZ(sa.zScore), judgedBy: 'size-aware' };
}

/** Judges one pool of amounts (signed integer cents; zeros are left out). */
export function judgePool(cents: ArrayLike<number>, fixedMinN: number): PooledDigits {
  const counter = new DigitCounter();
  counter.addAll(cents);
  return judgeFirstDigitCounts(counter.counts('firstDigit'), fixedMinN);
}
