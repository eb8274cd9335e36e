import fc from 'fast-check';
import { lineCodePosition, lineItemCentsFast, LineItemRowSchema } from '../../../shared/returns/batch-rows';
import { LINE_CODES } from '../../../shared/returns/line-codes';

/** The fast path's verdict must never differ from the schema's: same cents when it accepts. */
function agrees(row: { return_ref: string; line_code: string; amount: string }): void {
  const fast = lineItemCentsFast(row.return_ref, lineCodePosition(row.line_code), row.amount);
  const slow = LineItemRowSchema.safeParse(row);
  if (Number.isNaN(fast)) {
    // The fast path doubts only rows the schema refuses (it is exact, not merely cautious).
    expect({ row, success: slow.success }).toEqual({ row, success: false });
  } else {
    expect({ row, success: slow.success }).toEqual({ row, success: true });
    expect(slow.data).toEqual({ returnRef: row.return_ref, lineCode: row.line_code, cents: fast });
  }
}

const refChar = fc.constantFrom(...'aZ09._/- -é\t\n'.split(''), 'A', 'z', '5', '/', '.');
const ref = fc.oneof(
  fc.string({ unit: refChar, minLength: 0, maxLength: 43 }),
  fc.constantFrom('', 'R', 'R-1', '.R', '-R', '_R', '/R', 'R'.repeat(40), 'R'.repeat(41), 'BEN-2024-000001', 'a/b.c_d-e', 'constructor', '__proto__'),
  fc.string(),
);
const code = fc.oneof(
  fc.constantFrom(...LINE_CODES),
  fc.constantFrom('', 'INC.WAGES', 'inc_wages', 'inc.wages ', 'constructor', '__proto__', 'toString', 'hasOwnProperty', 'tot.income.', 'valueOf'),
  fc.string(),
);
const digit = fc.constantFrom(...'0123456789'.split(''));
const digits = (min: number, max: number) => fc.string({ unit: digit, minLength: min, maxLength: max });
const amount = fc.oneof(
  fc.tuple(fc.constantFrom('', '-', '+', ' '), digits(0, 14), fc.constantFrom('', '.', ','), digits(0, 4)).map(([s, w, p, f]) => `${s}${w}${p}${f}`),
  fc
    .tuple(fc.constantFrom('', '-'), fc.constantFrom('', '0', '000000'), digits(1, 12), fc.constantFrom('', '.5', '.05', '.', '.123'))
    .map(([s, z, w, f]) => `${s}${z}${w}${f}`),
  fc.constantFrom(
    '0',
    '-0',
    '-0.00',
    '-0.01',
    '9999999999.99',
    '10000000000',
    '10000000000.00',
    '-9999999999.99',
    '0009999999999.99',
    '1e5',
    '1.2E+5',
    '$5',
    '١٢',
    '１２',
    '5.',
    '.5',
    '-',
    '--5',
    '5-',
    ' 5',
    '5 ',
    'NaN',
    'Infinity',
  ),
  fc.double().map(String),
  fc.integer().map(String),
  fc.string(),
);

describe('line item fast path', () => {
  it('gives the schema verdict and cents on random rows', () => {
    fc.assert(
      fc.property(ref, code, amount, (r, c, a) => agrees({ return_ref: r, line_code: c, amount: a })),
      { numRuns: 20000 },
    );
  });

  it('gives the schema verdict on edge cases', () => {
    for (const c of [...LINE_CODES, 'constructor', '']) {
      for (const a of [
        '0',
        '-0',
        '-0.00',
        '-1',
        '-0.01',
        '1.5',
        '1.55',
        '1.555',
        '9999999999.99',
        '-9999999999.99',
        '10000000000',
        '0000000000009999999999.99',
        '',
      ]) {
        for (const r of ['R', 'R-1', 'R'.repeat(40), 'R'.repeat(41), '-R', '']) agrees({ return_ref: r, line_code: c, amount: a });
      }
    }
  });
});
