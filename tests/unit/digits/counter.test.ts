import { DigitCounter, decimalDigitCount, firstTwoDigitsOf, parseAmounts, profileAmounts } from '../../../shared/digits';

/** Counts of one test as {label: count}, zeros left out, for readable expectations. */
function nonZero(counts: number[], labels: number[]): Record<string, number> {
  const out: Record<string, number> = {};
  counts.forEach((c, i) => {
    if (c > 0) out[String(labels[i]).padStart(labels === LAST ? 2 : 1, '0')] = c;
  });
  return out;
}
const FIRST = [1, 2, 3, 4, 5, 6, 7, 8, 9];
const SECOND = [0, 1, 2, 3, 4, 5, 6, 7, 8, 9];
const TWO = Array.from({ length: 90 }, (_, i) => i + 10);
const LAST = Array.from({ length: 100 }, (_, i) => i);

describe('digit extraction from the decimal text (docs/methods.md#which-amounts-each-test-takes)', () => {
  it('decimalDigitCount at every power of ten and one below it (math fact)', () => {
    for (let k = 0; k <= 15; k++) {
      expect(decimalDigitCount(10 ** k)).toBe(k + 1);
      if (k > 0) expect(decimalDigitCount(10 ** k - 1)).toBe(k);
    }
  });

  it('first two significant digits of an integer; a one-digit number d gives d0 (math fact)', () => {
    expect(firstTwoDigitsOf(7)).toBe(70);
    expect(firstTwoDigitsOf(10)).toBe(10);
    expect(firstTwoDigitsOf(999_999_999_999_999)).toBe(99);
    expect(firstTwoDigitsOf(100_000_000_000_000)).toBe(10);
    expect(firstTwoDigitsOf(4_503_599_627_370_495)).toBe(45); // 2^52 - 1
  });

  it('reads the digits of each amount as written', () => {
    const p = profileAmounts(['0.05', '1234.56', 98765, '10', '100', '-3456.78', '9.99', '19.99']);
    // first digit of every non-zero amount; 0.05 counts as 5
    expect(nonZero(p.firstDigit.counts, FIRST)).toEqual({ 1: 4, 3: 1, 5: 1, 9: 2 });
    // second digit and first two of amounts >= 10: 1234.56 98765 10 100 3456.78 19.99
    expect(nonZero(p.secondDigit.counts, SECOND)).toEqual({ 0: 2, 2: 1, 4: 1, 8: 1, 9: 1 });
    expect(nonZero(p.firstTwo.counts, TWO)).toEqual({ 10: 2, 12: 1, 19: 1, 34: 1, 98: 1 });
    // last two whole-unit digits of amounts >= 1,000 (docs/methods.md#which-amounts-each-test-takes):
    // 1234 -> 34, 98765 -> 65, 3456 -> 56; 100 is left out (its tens digit is its second significant digit)
    expect(nonZero(p.lastTwo.counts, LAST)).toEqual({ 34: 1, 56: 1, 65: 1 });
    expect(p.firstDigit.n).toBe(8);
    expect(p.secondDigit.n).toBe(6);
    expect(p.lastTwo.n).toBe(3);
  });

  it('counts every exclusion with its reason', () => {
    const p = profileAmounts([0, '0.00', -0, 0.01, 5, -9.99, 10, 99.99, 100, -250]);
    const byReason = Object.fromEntries(p.excluded.map((e) => [e.reason, e.count]));
    expect(byReason).toEqual({ zero: 3, below_10: 3, below_1000: 7 });
    expect(p.count).toBe(10);
    expect(p.firstDigit.n).toBe(7); // every non-zero amount
    expect(p.secondDigit.n).toBe(7 - 3);
    expect(p.firstTwo.n).toBe(7 - 3);
    expect(p.lastTwo.n).toBe(7 - 7);
    expect(p.excluded.find((e) => e.reason === 'below_10')?.tests).toEqual(['secondDigit', 'firstTwo']);
  });

  it('analyses absolute values and reports positives and negatives separately', () => {
    const p = profileAmounts([123, -456, -789.01, 12, -1]);
    expect(p.positives.count).toBe(2);
    expect(p.negatives.count).toBe(3);
    expect(nonZero(p.positives.firstDigit.counts, FIRST)).toEqual({ 1: 2 });
    expect(nonZero(p.negatives.firstDigit.counts, FIRST)).toEqual({ 1: 1, 4: 1, 7: 1 });
    expect(nonZero(p.firstDigit.counts, FIRST)).toEqual({ 1: 3, 4: 1, 7: 1 });
    expect(nonZero(p.negatives.lastTwo.counts, LAST)).toEqual({}); // all below 1,000
  });

  it('amounts up to 10^12 and the smallest amount 0.01 (issue 3 edge cases)', () => {
    const p = profileAmounts([1e12, '999999999999.99', 0.01, '-0.01']);
    expect(nonZero(p.firstDigit.counts, FIRST)).toEqual({ 1: 3, 9: 1 });
    expect(nonZero(p.firstTwo.counts, TWO)).toEqual({ 10: 1, 99: 1 });
    expect(nonZero(p.lastTwo.counts, LAST)).toEqual({ '00': 1, 99: 1 });
  });

  it('a reused counter gives the same counts as a fresh one, and merge pools two sets', () => {
    const a = parseAmounts([12.5, 300, -7, 0, 45_000]);
    const b = parseAmounts([999, 1.5, -64.2]);
    const counter = new DigitCounter();
    counter.addAll(b);
    counter.reset();
    counter.addAll(a);
    const fresh = new DigitCounter();
    fresh.addAll(a);
    expect(Array.from(counter.counts('firstDigit'))).toEqual(Array.from(fresh.counts('firstDigit')));
    const other = new DigitCounter();
    other.addAll(b);
    counter.merge(other);
    const both = new DigitCounter();
    for (const c of [...a, ...b]) both.add(c);
    for (const t of ['firstDigit', 'secondDigit', 'firstTwo', 'lastTwo'] as const) {
      expect(Array.from(counter.counts(t))).toEqual(Array.from(both.counts(t)));
    }
    expect(counter.zeros).toBe(1);
  });
});
