import { digitProfileSchema, profileAmounts, type DigitProfile } from '../../../shared/digits';

/** Every profile must match the published JSON contract (docs/design.md#command-line) and be plain JSON. */
function checked(p: DigitProfile): DigitProfile {
  const json = JSON.parse(JSON.stringify(p)) as unknown;
  expect(json).toEqual(p); // nothing lost in JSON: no NaN, Infinity or undefined
  digitProfileSchema.parse(json);
  return p;
}

describe('edge cases (issue 3)', () => {
  it('empty input: zero counts, null figures, too_few everywhere', () => {
    const p = checked(profileAmounts([]));
    expect(p.count).toBe(0);
    expect(p.excluded.every((e) => e.count === 0)).toBe(true);
    for (const t of [p.firstDigit, p.secondDigit, p.firstTwo, p.lastTwo]) {
      expect(t.n).toBe(0);
      expect(t.mad).toBeNull();
      expect(t.pValue).toBeNull();
      expect(t.conformity).toBe('too_few');
      expect(t.z.every((z) => z === null)).toBe(true);
    }
    expect(p.sizeAware).toMatchObject({ verdict: 'too_few', zScore: null });
    expect(p.roundShare).toMatchObject({ n: 0, count: 0, share: null, pValue: null });
    expect(p.duplicates).toEqual([]);
    expect(p.summation.mad).toBeNull();
    expect(p.secondOrder).toMatchObject({ n: 0, zeroDifferences: 0, mad: null });
    expect(p.distortionFactor.value).toBeNull();
  });

  it('one amount: counted, figures defined, verdicts too_few', () => {
    const p = checked(profileAmounts(['4321.09']));
    expect(p.firstDigit.counts[3]).toBe(1);
    expect(p.lastTwo.counts[21]).toBe(1);
    expect(p.firstDigit.mad).toBeCloseTo((1 - 0.09691 + (1 - 0.09691)) / 9, 5); // |1 - p4| + sum of the others
    expect(p.firstDigit.conformity).toBe('too_few');
    expect(p.sizeAware.verdict).toBe('too_few');
    expect(p.secondOrder.n).toBe(0);
    expect(p.duplicates).toEqual([]);
  });

  it('all zeros: every amount excluded as zero', () => {
    const p = checked(profileAmounts([0, '0', '0.00', -0, '-0.00']));
    expect(p.count).toBe(5);
    expect(p.excluded.find((e) => e.reason === 'zero')?.count).toBe(5);
    expect(p.firstDigit.n).toBe(0);
    expect(p.duplicates).toEqual([]); // zeros are not counted as repeated amounts
  });

  it('all the same amount: one repeated amount, first digit all in one bin, high verdict', () => {
    const p = checked(profileAmounts(new Array(40).fill('250.00')));
    expect(p.duplicates).toEqual([{ amount: '250.00', count: 40 }]);
    expect(p.firstDigit.counts[1]).toBe(40);
    expect(p.secondOrder).toMatchObject({ n: 0, zeroDifferences: 39 });
    expect(p.sizeAware.verdict).toBe('high');
    expect(p.roundShare.count).toBe(0); // 250 ends in 50
  });

  it('huge amounts up to 10^12 and the smallest, 0.01', () => {
    const p = checked(profileAmounts([1e12, '999999999999.99', 0.01, '123456789012.34']));
    expect(p.firstDigit.counts).toEqual([3, 0, 0, 0, 0, 0, 0, 0, 1]);
    expect(p.summation.total).toBeCloseTo(1e12 + 999999999999.99 + 123456789012.34, 2);
    expect(p.distortionFactor.n).toBe(3);
  });

  it('negative amounts only: the negatives profile carries them, positives are empty', () => {
    const p = checked(profileAmounts([-12.5, '-300', -4000.01, '-300.00']));
    expect(p.positives.count).toBe(0);
    expect(p.positives.firstDigit.n).toBe(0);
    expect(p.negatives.count).toBe(4);
    expect(p.negatives.firstDigit.counts).toEqual(p.firstDigit.counts);
    expect(p.duplicates).toEqual([{ amount: '-300.00', count: 2 }]);
  });

  it.each([
    [0.001, /Amount at index 1 \(0\.001\) has more than 2 decimals/],
    ['12,5', /Amount at index 1 \("12,5"\) contains a comma/],
  ])('rejects %p clearly', (bad, message) => {
    expect(() => profileAmounts([5, bad])).toThrow(message);
  });
});

describe('the list-based tests', () => {
  it('number duplication ranks by count, then by larger absolute amount (Nigrini 2011)', () => {
    const p = profileAmounts(['10', '10', '10', '-75.5', '-75.50', '900', '900', '12', '12', '13']);
    expect(p.duplicates).toEqual([
      { amount: '10.00', count: 3 },
      { amount: '900.00', count: 2 },
      { amount: '-75.50', count: 2 },
      { amount: '12.00', count: 2 },
    ]);
    // equal absolute values of opposite sign are different amounts
    expect(profileAmounts([5, -5]).duplicates).toEqual([]);
    // top-N limit
    expect(profileAmounts([1, 1, 2, 2, 3, 3], { top: 2 }).duplicates.map((d) => d.amount)).toEqual(['3.00', '2.00']);
  });

  it('summation test: sums of amounts by first two digits against 1/90 (Nigrini 2011)', () => {
    const p = profileAmounts([10, 100.5, 1000, 11, 99, -990]);
    expect(p.summation.sums[0]).toBeCloseTo(1110.5, 10); // 10 + 100.5 + 1000 in group 10
    expect(p.summation.sums[1]).toBeCloseTo(11, 10);
    expect(p.summation.sums[89]).toBeCloseTo(1089, 10); // 99 + |-990|
    expect(p.summation.total).toBeCloseTo(2210.5, 10);
    expect(p.summation.largest[0]).toEqual({ digits: 10, share: 1110.5 / 2210.5 });
    expect(p.summation.expected).toBeCloseTo(1 / 90, 15);
  });

  it('second-order test: first two digits of differences of the sorted amounts (Nigrini & Miller 2009)', () => {
    // sorted absolute values 1.00 1.05 2.05 14.05 14.05 -> differences 0.05 1.00 12.00 0.00
    const p = profileAmounts([14.05, 1, -2.05, 1.05, 14.05]);
    expect(p.secondOrder.zeroDifferences).toBe(1);
    expect(p.secondOrder.n).toBe(3);
    const nonZero = Object.fromEntries(p.secondOrder.counts.map((c, i) => [i + 10, c]).filter(([, c]) => c > 0));
    expect(nonZero).toEqual({ 50: 1, 10: 1, 12: 1 }); // 0.05 -> digits 5,0; 1.00 -> 1,0; 12.00 -> 1,2
  });

  it('round-number share: amounts >= 1,000 ending in 00, binomial tail against 1 % (docs/methods.md#other-digit-figures)', () => {
    const amounts = ['1000', '2000.50', '3100', '4700', '1234', '99', '250', '100'];
    const p = profileAmounts(amounts);
    // the whole-unit part decides (as in the last-two test): 2000.50 counts as round; 100 and 250 are below 1,000
    expect(p.roundShare).toMatchObject({ n: 5, count: 4, share: 4 / 5, expected: 0.01 });
    // P(X >= 4), X ~ Binomial(5, 0.01) = 5·0.01^4·0.99 + 0.01^5, worked by hand
    const want = 5 * 0.01 ** 4 * 0.99 + 0.01 ** 5;
    expect(p.roundShare.pValue).toBeCloseTo(want, 14);
  });

  it('distortion factor is near 0 for Benford-like amounts and negative for amounts crowded at low leading digits (Nigrini 1996)', () => {
    // x = 10^(1 + i/n) spreads evenly over one decade in log scale: Benford in the limit
    const even = Array.from({ length: 2000 }, (_, i) => (Math.round(10 ** (1 + (i + 0.5) / 2000) * 100) / 100).toFixed(2));
    const p = profileAmounts(even);
    expect(Math.abs(p.distortionFactor.value as number)).toBeLessThan(0.005);
    // EM = 90 / (n (10^(1/n) - 1)) tends to 90 / ln 10 = 39.087 (math fact)
    expect(p.distortionFactor.expectedMean).toBeCloseTo(90 / Math.log(10), 1);
    const low = profileAmounts(['10.5', '11', '120', '1300', '14', '15.25']);
    expect(low.distortionFactor.value as number).toBeLessThan(-0.5);
  });
});

describe('digitProfileSchema (zod 4) is the contract', () => {
  it('accepts the profile, rejects a missing field, an unknown field and a wrong verdict', () => {
    const p = JSON.parse(JSON.stringify(profileAmounts(['12.50', '300', '-4.20']))) as Record<string, unknown>;
    expect(digitProfileSchema.safeParse(p).success).toBe(true);
    const { roundShare: _dropped, ...missing } = p;
    expect(digitProfileSchema.safeParse(missing).success).toBe(false);
    expect(digitProfileSchema.safeParse({ ...p, extra: 1 }).success).toBe(false);
    const wrong = { ...p, sizeAware: { ...(p.sizeAware as object), verdict: 'suspicious' } };
    expect(digitProfileSchema.safeParse(wrong).success).toBe(false);
  });
});
