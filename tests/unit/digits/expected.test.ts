import { DIGIT_LABELS, FIRST_DIGIT_EXPECTED, FIRST_TWO_EXPECTED, LAST_TWO_EXPECTED, SECOND_DIGIT_EXPECTED } from '../../../shared/digits';

describe('expected proportions against the published tables', () => {
  it('first digit: Benford 1938 / Hill 1995 table as quoted in docs/methods.md#expected-proportions (5 decimals)', () => {
    const published = [0.30103, 0.17609, 0.12494, 0.09691, 0.07918, 0.06695, 0.05799, 0.05115, 0.04576];
    expect(FIRST_DIGIT_EXPECTED).toHaveLength(9);
    published.forEach((p, i) => expect(FIRST_DIGIT_EXPECTED[i]).toBeCloseTo(p, 5));
  });

  it('second digit: Benford 1938 / Hill 1995 table as quoted in docs/methods.md#expected-proportions (5 decimals)', () => {
    const published = [0.11968, 0.11389, 0.10882, 0.10433, 0.10031, 0.09668, 0.09337, 0.09035, 0.08757, 0.085];
    expect(SECOND_DIGIT_EXPECTED).toHaveLength(10);
    published.forEach((p, i) => expect(SECOND_DIGIT_EXPECTED[i]).toBeCloseTo(p, 5));
  });

  it('first two digits: the ten two-digit groups of each first digit add up to it (math fact)', () => {
    expect(FIRST_TWO_EXPECTED).toHaveLength(90);
    for (let d = 1; d <= 9; d++) {
      let sum = 0;
      for (let s = 0; s <= 9; s++) sum += FIRST_TWO_EXPECTED[10 * d + s - 10];
      expect(sum).toBeCloseTo(FIRST_DIGIT_EXPECTED[d - 1], 14);
    }
  });

  it('first two digits: the groups of each second digit add up to it (math fact)', () => {
    for (let s = 0; s <= 9; s++) {
      let sum = 0;
      for (let d = 1; d <= 9; d++) sum += FIRST_TWO_EXPECTED[10 * d + s - 10];
      expect(sum).toBeCloseTo(SECOND_DIGIT_EXPECTED[s], 14);
    }
  });

  it('first two digits 10 and 99: log10(11/10) = 0.04139, log10(100/99) = 0.00436 (math fact)', () => {
    expect(FIRST_TWO_EXPECTED[0]).toBeCloseTo(0.04139, 5);
    expect(FIRST_TWO_EXPECTED[89]).toBeCloseTo(0.00436, 5);
  });

  it('last two digits: uniform 0.01 (docs/methods.md#expected-proportions, common practice, no source)', () => {
    expect(LAST_TWO_EXPECTED).toHaveLength(100);
    expect(Array.from(LAST_TWO_EXPECTED).every((p) => p === 0.01)).toBe(true);
  });

  it('each table sums to 1 (math fact) and labels run 1..9, 0..9, 10..99, 00..99', () => {
    for (const t of [FIRST_DIGIT_EXPECTED, SECOND_DIGIT_EXPECTED, FIRST_TWO_EXPECTED, LAST_TWO_EXPECTED]) {
      expect(t.reduce((a, b) => a + b, 0)).toBeCloseTo(1, 13);
    }
    expect(DIGIT_LABELS.firstDigit).toEqual([1, 2, 3, 4, 5, 6, 7, 8, 9]);
    expect(DIGIT_LABELS.secondDigit[0]).toBe(0);
    expect(DIGIT_LABELS.firstTwo[0]).toBe(10);
    expect(DIGIT_LABELS.firstTwo[89]).toBe(99);
    expect(DIGIT_LABELS.lastTwo).toHaveLength(100);
  });
});
