import fc from 'fast-check';
import { centsFromDecimal, centsFromNumeric, decimalProblem, formatCents, MAX_LINE_AMOUNT_CENTS } from '../../../shared/returns/money';

describe('centsFromDecimal', () => {
  it.each([
    ['0', 0],
    ['12', 1200],
    ['12.3', 1230],
    ['12.34', 1234],
    ['-12.34', -1234],
    ['-0', 0],
    ['0007.50', 750],
    ['9999999999.99', MAX_LINE_AMOUNT_CENTS],
    ['000000000000000000001.50', 150],
  ])('reads %s', (s, c) => {
    expect(centsFromDecimal(s)).toBe(c);
  });

  it.each([
    ['', 'empty'],
    ['1,234.50', 'comma'],
    ['12,5', 'comma'],
    ['1 234', 'spaces'],
    ['$12', 'currency'],
    ['1.2E+5', 'exponent'],
    ['12.345', 'decimals'],
    ['10000000000.00', 'range'],
    ['12.', 'syntax'],
    ['.5', 'syntax'],
    ['+5', 'syntax'],
    ['abc', 'syntax'],
  ])('refuses %j as %s', (s, problem) => {
    expect(centsFromDecimal(s)).toBeNaN();
    expect(decimalProblem(s)).toBe(problem);
  });

  it('round-trips every amount through formatCents', () => {
    fc.assert(
      fc.property(fc.integer({ min: -MAX_LINE_AMOUNT_CENTS, max: MAX_LINE_AMOUNT_CENTS }), (c) => {
        expect(centsFromDecimal(formatCents(c))).toBe(c === 0 ? 0 : c);
        expect(centsFromNumeric(formatCents(c))).toBe(c);
      }),
    );
  });

  it('formats with two decimals', () => {
    expect(formatCents(5)).toBe('0.05');
    expect(formatCents(-123456)).toBe('-1234.56');
    expect(formatCents(100)).toBe('1.00');
  });
});
