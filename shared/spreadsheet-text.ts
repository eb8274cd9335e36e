/**
 * Text that came from an upload (or any user) and is written into a spreadsheet export is
 * neutralised against formula injection ("CSV injection", OWASP): a cell starting with
 * = + - @ (or a tab or carriage return, which some programs strip before looking) could be
 * read as a formula by Excel or LibreOffice, e.g. `=HYPERLINK("http://…","click")`. Such
 * text gets a leading apostrophe, so it shows as the text it was and is never evaluated.
 */

const FORMULA_START = /^[=+\-@\t\r]/;

/** True when a spreadsheet could read this text as a formula. */
export function looksLikeFormula(text: string): boolean {
  return FORMULA_START.test(text);
}

/**
 * The text to put in a spreadsheet cell: unchanged unless it could start a formula, then
 * prefixed with an apostrophe. Numbers are written as numbers, not through this.
 */
export function safeCellText(text: string | null | undefined): string {
  if (text === null || text === undefined) return '';
  return FORMULA_START.test(text) ? `'${text}` : text;
}
