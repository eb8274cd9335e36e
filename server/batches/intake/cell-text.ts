/**
 * Turns a cell as exceljs reads it into the trimmed text the row schemas judge, so an XLSX
 * sheet and a CSV file are held to exactly the same rules.
 *
 * Formulas are never evaluated: a formula cell gives the value Excel saved with it, and
 * a formula saved without a value is an error the clerk must fix in Excel.
 */
import { formatCents } from '../../../shared/returns/money';

/** A cell's text, or why it has none. */
export interface CellText {
  text: string;
  problem?: string;
}

const BLANK: CellText = { text: '' };

/**
 * Text of a number cell. Excel stores numbers as doubles; a figure typed as 1234.56 is
 * read back as the nearest double, and formula results can carry noise in the 15th digit
 * (0.1 + 0.2). Within a millionth of a cent the number is taken as that cent amount; any
 * other fraction is shown as it is, so the amount check reports "more than 2 decimals".
 */
export function numberText(n: number): string {
  if (!Number.isFinite(n)) return String(n);
  if (Number.isInteger(n) && Math.abs(n) < 1e21) return n.toFixed(0);
  const c = Math.round(n * 100);
  if (Math.abs(n * 100 - c) < 1e-6 && Math.abs(c) < Number.MAX_SAFE_INTEGER) return formatCents(c);
  return String(n);
}

/**
 * Reads one cell value from exceljs's streaming reader.
 * @param v `row.values[i]`: string, number, boolean, Date, formula, rich text, hyperlink or error objects
 */
export function cellText(v: unknown): CellText {
  if (v === null || v === undefined) return BLANK;
  if (typeof v === 'string') return { text: v.trim() };
  if (typeof v === 'number') {
    if (Number.isNaN(v)) return { text: '', problem: 'holds an error value instead of a number (such as #DIV/0! or #N/A); correct the cell in Excel' };
    return { text: numberText(v) };
  }
  if (typeof v === 'boolean') return { text: '', problem: `holds the logical value ${v ? 'TRUE' : 'FALSE'}; enter the value itself as text or a number` };
  if (v instanceof Date) return { text: '', problem: 'holds a date; format the column as Text or General and enter the value again' };
  if (typeof v === 'object') {
    const o = v as Record<string, unknown>;
    if ('formula' in o || 'sharedFormula' in o) {
      if (!('result' in o) || o.result === undefined || o.result === null) {
        return {
          text: '',
          problem:
            'holds a formula with no saved value (Plumbline never calculates formulas); open the workbook in Excel and save it, or paste the values in place of the formulas',
        };
      }
      const inner = cellText(o.result);
      return inner.problem ? { text: '', problem: `holds a formula whose saved result is not usable: ${inner.problem}` } : inner;
    }
    if (Array.isArray(o.richText))
      return {
        text: (o.richText as { text?: string }[])
          .map((r) => r.text ?? '')
          .join('')
          .trim(),
      };
    if ('hyperlink' in o && typeof o.text === 'string') return { text: o.text.trim() };
    if ('error' in o) return { text: '', problem: `holds the error value ${String(o.error)}; correct the cell in Excel` };
  }
  return { text: '', problem: 'holds a value Plumbline cannot read; enter it as plain text or a number' };
}
