import { looksLikeFormula, safeCellText } from '../../../shared/spreadsheet-text';

describe('safeCellText (formula injection)', () => {
  it.each(['=1+1', '+SUM(A1:A9)', '-2+3', '@cmd', '\t=1', '\r=1', '=HYPERLINK("http://example.net","x")'])('neutralises %j with a leading apostrophe', (t) => {
    expect(looksLikeFormula(t)).toBe(true);
    expect(safeCellText(t)).toBe(`'${t}`);
  });

  it.each(['Aldermere', 'ALD-2024-000001', '12.50', 'tin "12" has 2 digits', ''])('leaves %j as it is', (t) => {
    expect(safeCellText(t)).toBe(t);
  });

  it('writes null as an empty cell', () => {
    expect(safeCellText(null)).toBe('');
  });
});
