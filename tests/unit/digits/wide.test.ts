/**
 * Amounts of any size (shared/digits/wide.ts): parsing, and the profile against an independent
 * computation (tests/unit/digits/wide-reference.ts: BigInt digits, log10 proportions, jstat).
 */
import { AmountParseError, amountFromText, digitProfileSchema, findAmountErrors, profileAmounts, profileCents } from '../../../shared/digits';
import { expectAgreement, powersOfTwo, scientificValues, type ReferenceAmount } from './wide-reference';

function expectProfileAgreement(amounts: ReferenceAmount[]): void {
  expectAgreement(digitProfileSchema.parse(JSON.parse(JSON.stringify(profileAmounts(amounts.map((a) => a.text))))), amounts);
}

describe('amountFromText: any size, scientific notation', () => {
  it.each([
    ['17592186044416', { negative: false, digits: '1759218604441600' }],
    ['1.2E+15', { negative: false, digits: '120000000000000000' }],
    ['-3.5e20', { negative: true, digits: `35${'0'.repeat(21)}` }],
    [`1${'0'.repeat(300)}`, { negative: false, digits: `1${'0'.repeat(302)}` }],
    ['1e300', { negative: false, digits: `1${'0'.repeat(302)}` }],
    ['99999999999999999999.99', { negative: false, digits: '9999999999999999999999' }],
  ])('%s is read from its digits', (text, wide) => {
    expect(amountFromText(text, 'line 1')).toEqual(wide);
  });

  it.each([
    ['2.5E3', 250000],
    ['1.25e1', 1250],
    ['-7E+0', -700],
    ['1234.50', 123450],
    ['12E-1', 120],
  ])('%s in scientific notation below 10^13 takes the cents path', (text, cents) => {
    expect(amountFromText(text, 'line 1')).toBe(cents);
  });

  it.each([
    ['1.2345E-3', /line 4 \("1\.2345E-3"\) has more than 2 decimals/],
    ['1.5E+', /is not a valid amount/],
    ['12,5', /contains a comma/],
    ['abc', /line 4 \("abc"\) is not a valid amount/],
    ['1e5000', /is too large: at most 1,000 digits/],
    ['', /is empty/],
  ])('%s is not an amount and is named with its place', (text, message) => {
    expect(() => amountFromText(text, 'line 4')).toThrow(AmountParseError);
    expect(() => amountFromText(text, 'line 4')).toThrow(message);
  });

  it('findAmountErrors accepts any size and names only what is not an amount', () => {
    expect(findAmountErrors(['1e21', 1e21, '17592186044416', 'x', '0.001']).map((p) => p.index)).toEqual([3, 4]);
  });
});

describe('profile of amounts of any size agrees with the independent computation', () => {
  it('2^0 .. 2^1000 (integers to 302 digits) and 10^300', () => {
    expectProfileAgreement([...powersOfTwo(1000), { value: 10n ** 300n, text: `1${'0'.repeat(300)}` }]);
  });

  it('1,000 values in scientific notation, some negative, some below 10^13', () => {
    expectProfileAgreement(scientificValues(1000));
  });

  it('keeps ordinary amounts exactly as the cents path had them', () => {
    const ordinary = ['123.45', '-80', '4500.10', '99', '12'];
    expect(profileAmounts(ordinary)).toEqual(profileCents([12345, -8000, 450010, 9900, 1200]));
  });

  it('sums, repeats and differences of wide amounts are exact', () => {
    const big = `12${'0'.repeat(40)}`;
    const p = profileAmounts([big, big, '-' + big, '15', '1e300', '1e300', '1e300']);
    expect(p.duplicates).toEqual([
      { amount: `1${'0'.repeat(300)}.00`, count: 3 },
      { amount: `${big}.00`, count: 2 },
    ]);
    // shares: 10^300 × 3 swamps the rest; group 10 holds it all to double precision
    expect(p.summation.largest[0]).toEqual({ digits: 10, share: 1 });
    expect(p.summation.total).toBeCloseTo(3e300, -290);
    // sorted sizes: 15, 12e40 ×3, 1e300 ×3 → differences 12e40-15 (first two 11), 0, 0, 1e300-12e40 (99), 0, 0
    expect(p.secondOrder.n).toBe(2);
    expect(p.secondOrder.zeroDifferences).toBe(4);
    expect(p.secondOrder.counts[11 - 10]).toBe(1);
    expect(p.secondOrder.counts[99 - 10]).toBe(1);
    expect(p.negatives.count).toBe(1);
    expect(p.positives.count).toBe(6);
  });

  it('the summation of an amount beyond the range of a double gives null sums, and shares still', () => {
    const p = digitProfileSchema.parse(JSON.parse(JSON.stringify(profileAmounts(['5e400', '1e400']))));
    expect(p.summation.total).toBeNull();
    expect(p.summation.proportions[50 - 10]).toBeCloseTo(5 / 6, 12);
    expect(p.summation.proportions[10 - 10]).toBeCloseTo(1 / 6, 12);
  });
});
