import { LineItemRowSchema, normaliseHeader, officeTaxYears, returnRowSchema, statementRowSchema } from '../../../shared/returns/batch-rows';

const years = { first: 2016, last: 2025 };
const goodReturn = {
  return_ref: 'ALD-2024-000001',
  tin: '012345678',
  tax_year: '2024',
  taxpayer_name: 'Maud Fennick',
  activity_code: 'retail',
  preparer_id: 'PRP-0001',
  email: '',
  postal_address: '',
};

function messages(result: { success: boolean; error?: { issues: { path: PropertyKey[]; message: string }[] } }) {
  return (result.error?.issues ?? []).map((i) => `${String(i.path[0])}: ${i.message}`);
}

describe('returns row schema', () => {
  const schema = returnRowSchema(years);

  it('reads a good row, keeping the TIN as text and leaving blanks as null', () => {
    expect(schema.parse(goodReturn)).toEqual({
      returnRef: 'ALD-2024-000001',
      tin: '012345678',
      taxYear: 2024,
      taxpayerName: 'Maud Fennick',
      activityCode: 'retail',
      preparerId: 'PRP-0001',
      email: null,
      postalAddress: null,
      filedOn: null,
    });
    expect(schema.parse({ ...goodReturn, preparer_id: '', activity_code: 'Food-Service' })).toMatchObject({ preparerId: null, activityCode: 'food-service' });
  });

  it('reports every bad cell of a row at once, each with how to fix it', () => {
    const m = messages(
      schema.safeParse({ ...goodReturn, tin: '12345678', tax_year: '2031', activity_code: 'bakery', email: 'not-an-address', taxpayer_name: '' }),
    );
    expect(m).toEqual([
      expect.stringMatching(/^tin: "12345678" has 8 digits; a TIN has 9\. If a leading zero was lost, format the column as Text/),
      expect.stringMatching(/^tax_year: 2031 is outside the tax years the office takes \(2016–2025\): a return can be filed only once its tax year has ended/),
      'taxpayer_name: is empty; enter the taxpayer name',
      expect.stringMatching(/^activity_code: "bakery" is not an activity code; use one of: none, retail/),
      expect.stringMatching(/^email: "not-an-address" is not an e-mail address/),
    ]);
  });

  it.each([
    ['123-456-789', /must be 9 digits without spaces, dots or dashes, e\.g\. 123456789/],
    ['12345678A', /is not a TIN: a TIN is exactly 9 digits/],
    ['', /is empty/],
  ])('explains the TIN %j', (tin, re) => {
    expect(messages(schema.safeParse({ ...goodReturn, tin })).join()).toMatch(re);
  });

  it('refuses a return reference with spaces or formula characters', () => {
    expect(messages(schema.safeParse({ ...goodReturn, return_ref: '=1+2' })).join()).toMatch(/is not a valid return reference/);
    expect(messages(schema.safeParse({ ...goodReturn, return_ref: 'A B' })).join()).toMatch(/is not a valid return reference/);
  });
});

describe('line item row schema', () => {
  it('reads the amount as cents', () => {
    expect(LineItemRowSchema.parse({ return_ref: 'R1', line_code: 'inc.wages', amount: '1234.5' })).toEqual({
      returnRef: 'R1',
      lineCode: 'inc.wages',
      cents: 123450,
    });
    expect(LineItemRowSchema.parse({ return_ref: 'R1', line_code: 'tot.income', amount: '-80.00' }).cents).toBe(-8000);
  });

  it('says what is wrong with an amount and a line code', () => {
    expect(messages(LineItemRowSchema.safeParse({ return_ref: 'R1', line_code: 'INC.WAGES', amount: '12.345' }))).toEqual([
      'line_code: "INC.WAGES" is not a line code; did you mean inc.wages? (codes are lower case with dots)',
      'amount: "12.345" has more than 2 decimal places; round it to cents, e.g. 1234.57',
    ]);
    expect(messages(LineItemRowSchema.safeParse({ return_ref: 'R1', line_code: 'inc.salary', amount: '1,200.00' })).join('\n')).toMatch(
      /"inc\.salary" is not a line code; the codes are: inc\.wages, .*\n.*"1,200\.00" contains a comma; use a point for decimals and no thousands separators/,
    );
  });

  it('refuses a negative amount except on tot.income', () => {
    expect(messages(LineItemRowSchema.safeParse({ return_ref: 'R1', line_code: 'exp.business.other', amount: '-5' }))).toEqual([
      'amount: is negative; exp.business.other is entered as a positive amount (only tot.income may be negative, for a business loss)',
    ]);
  });
});

describe('statement row schema', () => {
  it('reads a statement and refuses an unknown kind', () => {
    const s = statementRowSchema(years);
    expect(s.parse({ tin: '123456789', tax_year: '2023', kind: 'Wages', payer: 'Stallow Mills Ltd', amount: '30000' })).toEqual({
      tin: '123456789',
      taxYear: 2023,
      kind: 'wages',
      payer: 'Stallow Mills Ltd',
      cents: 3_000_000,
    });
    expect(messages(s.safeParse({ tin: '123456789', tax_year: '2023', kind: 'dividends', payer: 'X', amount: '1' })).join()).toMatch(
      /"dividends" is not a statement kind; use one of: wages, interest, sales/,
    );
  });
});

describe('header names and the office range', () => {
  it('normalises header cells', () => {
    expect(normaliseHeader(' Return Ref ')).toBe('return_ref');
    expect(normaliseHeader('LINE-CODE')).toBe('line_code');
  });

  it('takes the ten tax years that have ended', () => {
    expect(officeTaxYears(new Date('2026-12-01T00:00:00Z'))).toEqual({ first: 2016, last: 2025 });
  });
});

describe('returns row: the optional filed_on column (issue 13)', () => {
  const schema = returnRowSchema(years);
  it('reads a filing date after the tax year, and leaves a blank or missing one null (the batch date counts)', () => {
    expect(schema.parse({ ...goodReturn, filed_on: '2025-06-02' }).filedOn).toBe('2025-06-02');
    expect(schema.parse({ ...goodReturn, filed_on: '' }).filedOn).toBeNull();
    expect(schema.parse(goodReturn).filedOn).toBeNull();
  });
  it('refuses a date that is not one, or one inside the tax year, saying how to fix it', () => {
    expect(messages(schema.safeParse({ ...goodReturn, filed_on: '2025-02-30' }))).toEqual([
      expect.stringMatching(/^filed_on: "2025-02-30" is not a date: write the filing date as YYYY-MM-DD/),
    ]);
    expect(messages(schema.safeParse({ ...goodReturn, filed_on: '15/04/2025' }))).toEqual([expect.stringMatching(/^filed_on: "15\/04\/2025" is not a date/)]);
    expect(messages(schema.safeParse({ ...goodReturn, filed_on: '2024-12-31' }))).toEqual([
      'filed_on: "2024-12-31" is within tax year 2024: a return is filed after its tax year ends',
    ]);
  });
});
