/**
 * Hard limits on reading an untrusted spreadsheet or CSV upload. A file is read as a
 * stream, and the first limit it crosses stops the reading with a {@link CapError} that
 * names the limit and says how to make the file fit. The limits keep the memory and time
 * one upload can cost bounded, whatever the file holds: a few kilobytes of ZIP can inflate
 * to gigabytes, and a shared-strings part of millions of tiny strings costs far more in
 * memory than on disk.
 */

/** The limits of one read. */
export interface ReadCaps {
  /** Most rows of one sheet or CSV file, the header row included. */
  maxRows: number;
  /** Most cells in one row (Excel's own limit is 16,384 columns, A to XFD). */
  maxColumns: number;
  /** Most cells in all the sheets read together. */
  maxCells: number;
  /** Most entries in an XLSX workbook's shared-strings table. */
  maxSharedStrings: number;
  /** Most bytes (UTF-8) of text in the shared-strings table together. */
  maxSharedStringBytes: number;
  /** Most bytes the ZIP parts read may inflate to together. */
  maxInflatedBytes: number;
  /** Most characters in one cell (Excel's own limit is 32,767). */
  maxCellChars: number;
  /** Most characters in one CSV record or one line of a text file. */
  maxLineChars: number;
}

/** Excel's sheet: 1,048,576 rows of 16,384 columns, cells of at most 32,767 characters. */
export const EXCEL_MAX_ROWS = 1_048_576;
export const EXCEL_MAX_COLUMNS = 16_384;
export const EXCEL_MAX_CELL_CHARS = 32_767;

/**
 * Defaults, sized so the largest batch the intake takes (a full Excel sheet of line items
 * and its returns) still fits, while a worst-case file inside them stays under about
 * 150 MB of memory in the reading thread (4 million shared strings of 64 MB of text are
 * held as one buffer and an offset table, not as 4 million objects).
 */
export const DEFAULT_READ_CAPS: ReadCaps = {
  maxRows: EXCEL_MAX_ROWS,
  maxColumns: EXCEL_MAX_COLUMNS,
  maxCells: 20_000_000,
  maxSharedStrings: 4_000_000,
  maxSharedStringBytes: 64 * 1024 * 1024,
  maxInflatedBytes: 768 * 1024 * 1024,
  maxCellChars: EXCEL_MAX_CELL_CHARS,
  maxLineChars: 1024 * 1024,
};

/** Which limit a file crossed. */
export type CapName = keyof ReadCaps;

/** A file crossed a reading limit: `message` names the limit and how to split the file. */
export class CapError extends Error {
  constructor(
    readonly cap: CapName,
    message: string,
  ) {
    super(message);
  }
}

const n = (v: number) => v.toLocaleString('en-GB');
const mb = (bytes: number) => `${Math.round(bytes / (1024 * 1024))} MB`;

/** Builds the {@link CapError} for a limit, `where` naming the sheet or file ("sheet \"returns\""). */
export function capError(cap: CapName, caps: ReadCaps, where: string): CapError {
  const split = 'Split the data into several smaller files and send each on its own.';
  switch (cap) {
    case 'maxRows':
      return new CapError(cap, `${where} has more than ${n(caps.maxRows)} rows, the most one file may hold. ${split}`);
    case 'maxColumns':
      return new CapError(
        cap,
        `${where} has a row with more than ${n(caps.maxColumns)} cells. Remove the columns that are not needed, or ${split.charAt(0).toLowerCase()}${split.slice(1)}`,
      );
    case 'maxCells':
      return new CapError(
        cap,
        `${where}: the workbook holds more than ${n(caps.maxCells)} cells in all, the most one upload may hold. Remove the sheets and columns that are not needed, or ${split.charAt(0).toLowerCase()}${split.slice(1)}`,
      );
    case 'maxSharedStrings':
      return new CapError(
        cap,
        `${where}: the workbook's table of texts holds more than ${n(caps.maxSharedStrings)} different texts, the most one upload may hold. ${split}`,
      );
    case 'maxSharedStringBytes':
      return new CapError(
        cap,
        `${where}: the workbook's table of texts holds more than ${mb(caps.maxSharedStringBytes)} of text, the most one upload may hold. ${split}`,
      );
    case 'maxInflatedBytes':
      return new CapError(cap, `${where}: the workbook unpacks to more than ${mb(caps.maxInflatedBytes)}, the most one upload may unpack to. ${split}`);
    case 'maxCellChars':
      return new CapError(
        cap,
        `${where} has a cell of more than ${n(caps.maxCellChars)} characters (Excel's own limit). Shorten that cell; a batch or amounts file needs no such text.`,
      );
    case 'maxLineChars':
      return new CapError(
        cap,
        `${where} has a line of more than ${n(caps.maxLineChars)} characters. Check that it is a CSV or text file with one record a line (quotes closed), or ${split.charAt(0).toLowerCase()}${split.slice(1)}`,
      );
  }
}

/** Counts rows and cells against the limits as a reader hands them on. */
export class CapCounter {
  private cells = 0;
  constructor(readonly caps: ReadCaps) {}

  /** Counts one row of `width` cells; `row` is its number within its sheet or file. */
  row(row: number, width: number, where: string): void {
    if (row > this.caps.maxRows) throw capError('maxRows', this.caps, where);
    if (width > this.caps.maxColumns) throw capError('maxColumns', this.caps, where);
    this.cells += width;
    if (this.cells > this.caps.maxCells) throw capError('maxCells', this.caps, where);
  }
}
