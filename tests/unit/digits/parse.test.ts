import fc from 'fast-check';
import { AmountParseError, MAX_ABS_CENTS, findAmountErrors, formatCents, parseAmount, parseAmounts, parseCents } from '../../../shared/digits';

/** The rule of the issue, written the slow obvious way: String(n) must be a plain decimal. */
function referenceCents(n: number): number | 'reject' {
  if (!Number.isFinite(n)) return 'reject';
  const text = String(n);
  const m = /^(-?)(\d+)(?:\.(\d{1,2}))?$/.exec(text);
  if (!m) return 'reject';
  const cents = Number(m[2]) * 100 + Number((m[3] ?? '').padEnd(2, '0'));
  if (Math.abs(Number(text)) >= 1e13) return 'reject';
  return m[1] === '-' && cents !== 0 ? -cents : cents;
}

function errorOf(fn: () => unknown): AmountParseError {
  try {
    fn();
  } catch (e) {
    if (e instanceof AmountParseError) return e;
    throw e;
  }
  throw new Error('expected an AmountParseError');
}

describe('parseAmount: accepted inputs (issue 3, "Inputs")', () => {
  it.each([
    [0, 0],
    [-0, 0],
    [0.01, 1],
    [0.1, 10],
    [5, 500],
    [12.5, 1250],
    [1234.56, 123456],
    [-80, -8000],
    [-0.05, -5],
    [1e12, 1e14],
    [999999999999.99, 99999999999999],
    [9999999999999.99, 999999999999999],
  ])('number %p is %p cents', (value, cents) => {
    expect(parseAmount(value)).toBe(cents);
  });

  it.each([
    ['0', 0],
    ['-0', 0],
    ['-0.00', 0],
    ['0.01', 1],
    ['7', 700],
    ['12.5', 1250],
    ['12.50', 1250],
    ['-1234.56', -123456],
    ['007.10', 710],
    ['1000000000000', 1e14],
    ['1000000000000.00', 1e14],
  ])('string %p is %p cents', (value, cents) => {
    expect(parseAmount(value)).toBe(cents);
  });

  it('reads integer cents with unit "cents" (numbers, bigints, digit strings)', () => {
    expect(Array.from(parseAmounts([1, -250, 10n ** 14n, '123456', '-5'], { unit: 'cents' }))).toEqual([1, -250, 1e14, 123456, -5]);
    expect(parseCents(MAX_ABS_CENTS)).toBe(MAX_ABS_CENTS);
  });
});

describe('parseAmount: rejected inputs name the value and its position', () => {
  it.each([
    [1e21, /index 3 \(1e\+21\) is in exponent notation/],
    [1e-7, /index 3 \(1e-7\) is in exponent notation/],
    [0.001, /index 3 \(0\.001\) has more than 2 decimals/],
    [0.1 + 0.2, /index 3 \(0\.30000000000000004\) has more than 2 decimals/],
    [NaN, /index 3 \(NaN\) is not a number/],
    [Infinity, /index 3 \(Infinity\) is not a finite number/],
    [-Infinity, /index 3 \(-Infinity\) is not a finite number/],
    [1e13, /index 3 \(10000000000000\) is out of range/],
    [1e20, /index 3 \(100000000000000000000\) is out of range/],
  ])('number %p', (value, message) => {
    expect(() => parseAmounts([1, 2, 3, value])).toThrow(message);
  });

  it.each([
    ['12,5', /index 3 \("12,5"\) contains a comma; use a point as the decimal separator/],
    ['1,234.50', /contains a comma/],
    ['1e21', /index 3 \("1e21"\) is in exponent notation/],
    ['2.5E3', /is in exponent notation/],
    ['0.001', /index 3 \("0\.001"\) has more than 2 decimals/],
    ['', /index 3 \(""\) is empty/],
    ['   ', /is blank/],
    [' 12', /contains spaces/],
    ['+12', /index 3 \("\+12"\) is not a valid amount/],
    ['.5', /is not a valid amount/],
    ['5.', /is not a valid amount/],
    ['-', /is not a valid amount/],
    ['12.5.1', /is not a valid amount/],
    ['$12', /is not a valid amount/],
    ['abc', /index 3 \("abc"\) is not a valid amount/],
    ['10000000000000', /is out of range/],
    ['99999999999999999999999', /is out of range/],
  ])('string %p', (value, message) => {
    expect(() => parseAmounts(['1', '2', '3', value])).toThrow(message);
  });

  it.each([
    [null, /index 0 \(null\) is null, not a number or a decimal string/],
    [undefined, /is missing/],
    [true, /\(true\) is a boolean/],
    [10n, /\(10n\) is a bigint/],
    [{ amount: 5 }, /is an object/],
    [[5], /is an array/],
  ])('other value %p', (value, message) => {
    expect(() => parseAmount(value)).toThrow(message);
  });

  it("keeps the value and the position on the error, and uses the caller's position names", () => {
    const e = errorOf(() => parseAmounts(['1.00', '12,5'], { positionOf: (i) => `line ${i + 1}` }));
    expect(e.position).toBe('line 2');
    expect(e.value).toBe('12,5');
    expect(e.message).toMatch(/^Amount at line 2 \("12,5"\) contains a comma/);
  });

  it('rejects non-integer or out-of-range cents', () => {
    expect(() => parseCents(12.5, 'index 0')).toThrow(/is not a whole number of cents/);
    expect(() => parseCents(MAX_ABS_CENTS + 1)).toThrow(/out of range/);
    expect(() => parseCents(10n ** 16n)).toThrow(/out of range/);
    expect(() => parseCents('12.50')).toThrow(/not a whole number of cents/);
  });

  it('lists every problem for a 422 answer', () => {
    // 1e21 is an amount of any size (wide.ts, issue 15); 1e-7 has more than 2 decimals.
    const problems = findAmountErrors([1, 'x', 2, 1e-7, '12,5', 1e21]);
    expect(problems.map((p) => p.index)).toEqual([1, 3, 4]);
    expect(problems[2].message).toMatch(/index 4 \("12,5"\)/);
  });
});

/** parseAmount's answer as cents or 'reject', for boolean properties (fast: no expect per run). */
function actualCents(n: unknown): number | 'reject' {
  try {
    return parseAmount(n);
  } catch (e) {
    if (e instanceof AmountParseError) return 'reject';
    throw e;
  }
}

describe('number fast path equals the String() rule (property, fast-check)', () => {
  it('for arbitrary doubles', () => {
    fc.assert(
      fc.property(fc.double(), (n) => Object.is(actualCents(n), referenceCents(n))),
      { numRuns: 50_000 },
    );
  });

  it('for decimals with 0 to 6 decimals at every magnitude', () => {
    fc.assert(
      fc.property(fc.integer({ min: -(2 ** 53) + 1, max: 2 ** 53 - 1 }), fc.integer({ min: 0, max: 6 }), (k, scale) => {
        const n = k / 10 ** scale;
        return Object.is(actualCents(n), referenceCents(n));
      }),
      { numRuns: 50_000 },
    );
  });

  it('decimal strings and their numbers give the same cents, and formatCents round-trips', () => {
    fc.assert(
      fc.property(fc.integer({ min: -MAX_ABS_CENTS, max: MAX_ABS_CENTS }), (cents) => {
        const text = formatCents(cents);
        return /^-?\d+\.\d\d$/.test(text) && actualCents(text) === cents && actualCents(Number(text)) === cents;
      }),
      { numRuns: 50_000 },
    );
  });
});
