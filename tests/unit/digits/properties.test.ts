import fc from 'fast-check';
import { formatCents, profileAmounts, profileCents } from '../../../shared/digits';

/** Cents of amounts from 0.01 up to below 10^10 (so that times 10^3 stays below 10^13). */
const centsArb = fc.integer({ min: 1, max: 999_999_999_999 });
const signedCentsArb = fc.integer({ min: -999_999_999_999, max: 999_999_999_999 });

describe('digit-engine properties (fast-check)', () => {
  it('scaling every amount by 10^k changes no first-digit count (math fact: scale invariance of significant digits)', () => {
    fc.assert(
      fc.property(fc.array(fc.tuple(centsArb, fc.boolean()), { minLength: 1, maxLength: 60 }), fc.integer({ min: 1, max: 3 }), (items, k) => {
        const cents = items.map(([c, neg]) => (neg ? -c : c));
        const scaled = cents.map((c) => c * 10 ** k);
        const a = profileAmounts(cents.map(formatCents)).firstDigit.counts;
        const b = profileAmounts(scaled.map(formatCents)).firstDigit.counts;
        return a.every((x, i) => x === b[i]);
      }),
      { numRuns: 500 },
    );
  });

  it('the order of the amounts does not matter (whole profile equal)', () => {
    fc.assert(
      fc.property(fc.array(signedCentsArb, { maxLength: 80 }), fc.nat(), (cents, seed) => {
        const shuffled = [...cents];
        let s = seed;
        for (let i = shuffled.length - 1; i > 0; i--) {
          s = (s * 1103515245 + 12345) % 2147483648;
          const j = s % (i + 1);
          [shuffled[i], shuffled[j]] = [shuffled[j], shuffled[i]];
        }
        return JSON.stringify(profileCents(cents)) === JSON.stringify(profileCents(shuffled));
      }),
      { numRuns: 300 },
    );
  });

  it('observed and expected proportions each sum to 1; counts sum to n', () => {
    fc.assert(
      fc.property(fc.array(signedCentsArb, { minLength: 1, maxLength: 200 }), (cents) => {
        const p = profileCents(cents);
        for (const t of [p.firstDigit, p.secondDigit, p.firstTwo, p.lastTwo]) {
          const n = t.counts.reduce((a, b) => a + b, 0);
          if (n !== t.n) return false;
          if (Math.abs(t.expected.reduce((a, b) => a + b, 0) - 1) > 1e-12) return false;
          if (n > 0 && Math.abs(t.counts.reduce((a, c) => a + c / n, 0) - 1) > 1e-12) return false;
        }
        const sharesTotal = p.summation.proportions.reduce<number>((a, b) => a + (b ?? 0), 0);
        return p.summation.total === 0 || Math.abs(sharesTotal - 1) < 1e-9;
      }),
      { numRuns: 300 },
    );
  });

  it('the pooled counts are the positive counts plus the negative counts', () => {
    fc.assert(
      fc.property(fc.array(signedCentsArb, { maxLength: 100 }), (cents) => {
        const p = profileCents(cents);
        return (['firstDigit', 'secondDigit', 'firstTwo', 'lastTwo'] as const).every((t) =>
          p[t].counts.every((c, i) => c === p.positives[t].counts[i] + p.negatives[t].counts[i]),
        );
      }),
      { numRuns: 300 },
    );
  });

  it('MAD, chi-square, KS and every Z are finite and non-negative whenever a test has amounts', () => {
    fc.assert(
      fc.property(fc.array(signedCentsArb, { minLength: 1, maxLength: 100 }), (cents) => {
        const p = profileCents(cents);
        return [p.firstDigit, p.secondDigit, p.firstTwo, p.lastTwo].every(
          (t) => t.n === 0 || [t.mad, t.chiSquare, t.ks, t.kuiper, t.ssd, ...t.z].every((x) => x !== null && Number.isFinite(x) && x >= 0),
        );
      }),
      { numRuns: 300 },
    );
  });
});
