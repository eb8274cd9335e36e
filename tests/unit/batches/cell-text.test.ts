import { cellText, numberText } from '../../../server/batches/intake/cell-text';
import { uuid7Factory } from '../../../server/batches/intake/uuid7';
import { copyText } from '../../../server/batches/batch-store.repository';

describe('XLSX cell text', () => {
  it('reads numbers as an accountant typed them, within floating-point noise', () => {
    expect(numberText(1234.56)).toBe('1234.56');
    expect(numberText(0.1 + 0.2)).toBe('0.30');
    expect(numberText(123456789)).toBe('123456789');
    expect(numberText(12.345)).toBe('12.345'); // left for the amount check to refuse
    expect(numberText(-80)).toBe('-80');
  });

  it('takes a formula by its saved result and never evaluates it', () => {
    expect(cellText({ formula: 'A1*2', result: 84.5 })).toEqual({ text: '84.50' });
    expect(cellText({ sharedFormula: 'B2', result: '012345678' })).toEqual({ text: '012345678' });
    expect(cellText({ formula: 'NOW()' }).problem).toMatch(/formula with no saved value/);
    expect(cellText({ formula: '1/0', result: NaN }).problem).toMatch(/saved result is not usable: holds an error value/);
  });

  it('joins rich text, reads hyperlinks by their text, and explains what it cannot read', () => {
    expect(cellText({ richText: [{ text: 'Maud ' }, { text: 'Fennick ' }] })).toEqual({ text: 'Maud Fennick' });
    expect(cellText({ text: 'mail me', hyperlink: 'mailto:x@example.net' })).toEqual({ text: 'mail me' });
    expect(cellText({ error: '#N/A' }).problem).toBe('holds the error value #N/A; correct the cell in Excel');
    expect(cellText(true).problem).toMatch(/logical value TRUE/);
    expect(cellText(new Date()).problem).toMatch(/holds a date/);
    expect(cellText(null)).toEqual({ text: '' });
    expect(cellText('  padded  ')).toEqual({ text: 'padded' });
  });
});

describe('intake helpers', () => {
  it('makes increasing UUIDv7 ids, even many within one millisecond', () => {
    let t = 1_764_700_000_000;
    const next = uuid7Factory(() => t);
    const ids = Array.from({ length: 10_000 }, () => next());
    t += 1;
    ids.push(next());
    for (const id of ids) expect(id).toMatch(/^[0-9a-f]{8}-[0-9a-f]{4}-7[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$/);
    expect([...ids].sort()).toEqual(ids);
    expect(new Set(ids).size).toBe(ids.length);
    expect(ids[0].replace(/-/g, '').slice(0, 12)).toBe((1_764_700_000_000).toString(16).padStart(12, '0'));
  });

  it('escapes text for COPY', () => {
    expect(copyText('a\tb\\c\nd\re')).toBe('a\\tb\\\\c\\nd\\re');
    expect(copyText(null)).toBe('\\N');
    expect(copyText('plain')).toBe('plain');
  });
});
