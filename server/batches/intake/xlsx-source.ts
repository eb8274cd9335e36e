/**
 * Streaming reader of XLSX workbooks (Office Open XML, ECMA-376 Part 1: SpreadsheetML)
 * under hard caps ({@link ReadCaps}). The ZIP parts are opened at random ({@link ZipFile}),
 * the shared strings are read first and held compactly (one UTF-8 buffer and an offset
 * table), and each worksheet is then read as a stream of rows.
 *
 * Cell values come out as exceljs's streaming reader gives them (numbers, strings,
 * booleans, `{formula, result}`, `{error}`), so server/batches/intake/cell-text.ts and the
 * amounts reader judge them as before: with styles not read, a date is its serial number.
 */
import { capError, CapCounter, CapError, type ReadCaps } from './caps';
import { attr, XmlError, XmlScanner, type XmlHandler } from './xml-scan';
import { ZipError, ZipFile, type ZipEntry } from './zip-reader';

/** The workbook cannot be read as an XLSX file; the message says why, for a person. */
export class WorkbookError extends Error {}

/** One row: its number as Excel shows it, and its cell values at their column (1-based, sparse). */
export interface SheetRow {
  number: number;
  values: unknown[];
}

/** A worksheet of the workbook, in the order of its tabs. */
export interface SheetInfo {
  name: string;
  part: string;
}

/** The shared-strings table, held as one buffer: millions of small strings cost bytes, not objects. */
class StringTable {
  private buf = Buffer.alloc(64 * 1024);
  private offsets = new Uint32Array(1024);
  private used = 0;
  count = 0;

  constructor(
    private readonly caps: ReadCaps,
    private readonly where: string,
  ) {}

  push(s: string): void {
    if (this.count >= this.caps.maxSharedStrings) throw capError('maxSharedStrings', this.caps, this.where);
    const bytes = Buffer.byteLength(s);
    if (this.used + bytes > this.caps.maxSharedStringBytes) throw capError('maxSharedStringBytes', this.caps, this.where);
    if (this.used + bytes > this.buf.length) {
      const bigger = Buffer.alloc(Math.max(this.buf.length * 2, this.used + bytes));
      this.buf.copy(bigger, 0, 0, this.used);
      this.buf = bigger;
    }
    if (this.count + 2 > this.offsets.length) {
      const bigger = new Uint32Array(this.offsets.length * 2);
      bigger.set(this.offsets);
      this.offsets = bigger;
    }
    this.buf.write(s, this.used);
    this.used += bytes;
    this.offsets[++this.count] = this.used;
  }

  get(i: number): string | undefined {
    if (!(i >= 0 && i < this.count)) return undefined;
    return this.buf.toString('utf8', this.offsets[i], this.offsets[i + 1]);
  }
}

/** A workbook opened for reading: its sheets (in tab order) and shared strings. */
export class XlsxReader {
  private inflated = 0;
  private strings: StringTable;
  private readonly counter: CapCounter;
  sheets: SheetInfo[] = [];

  private constructor(
    private readonly zip: ZipFile,
    private readonly caps: ReadCaps,
    private readonly label: string,
  ) {
    this.strings = new StringTable(caps, label);
    this.counter = new CapCounter(caps);
  }

  /**
   * Opens a workbook: reads its directory, its list of sheets and its shared strings.
   * @param label how messages name the file, e.g. "batch.xlsx"
   * @throws WorkbookError (not a workbook), CapError (a limit crossed)
   */
  static async open(path: string, caps: ReadCaps, label: string): Promise<XlsxReader> {
    let zip: ZipFile;
    try {
      zip = await ZipFile.open(path);
    } catch (e) {
      throw e instanceof ZipError ? new WorkbookError(`it is not a readable XLSX workbook: ${e.message}`) : e;
    }
    const reader = new XlsxReader(zip, caps, label);
    try {
      await reader.readStructure();
      return reader;
    } catch (e) {
      await zip.close();
      throw reader.wrap(e);
    }
  }

  async close(): Promise<void> {
    await this.zip.close();
  }

  private wrap(e: unknown): unknown {
    if (e instanceof ZipError || e instanceof XmlError) return new WorkbookError(`it is not a readable XLSX workbook: ${e.message}`);
    return e;
  }

  private budget = (bytes: number) => {
    this.inflated += bytes;
    if (this.inflated > this.caps.maxInflatedBytes) throw capError('maxInflatedBytes', this.caps, this.label);
  };

  /** Feeds one part through a handler. */
  private async scan(entry: ZipEntry, h: XmlHandler, onChunk?: () => void): Promise<void> {
    const decoder = new TextDecoder('utf-8');
    const scanner = new XmlScanner(h, this.caps.maxCellChars * 8 + 65536, () => capError('maxCellChars', this.caps, `The part ${entry.name}`));
    for await (const chunk of this.zip.read(entry, this.budget)) {
      scanner.feed(decoder.decode(chunk, { stream: true }));
      onChunk?.();
    }
    scanner.feed(decoder.decode());
    scanner.end();
  }

  private async relationships(part: string): Promise<Map<string, { type: string; target: string }>> {
    const slash = part.lastIndexOf('/');
    const relsPart = `${part.slice(0, slash + 1)}_rels/${part.slice(slash + 1)}.rels`;
    const out = new Map<string, { type: string; target: string }>();
    const entry = this.zip.find(relsPart);
    if (!entry) return out;
    const base = part.slice(0, slash + 1);
    await this.scan(entry, {
      capturing: false,
      open(name, attrs) {
        if (name !== 'Relationship') return;
        const id = attr(attrs, 'Id');
        const target = attr(attrs, 'Target');
        if (id && target && attr(attrs, 'TargetMode') !== 'External') out.set(id, { type: attr(attrs, 'Type') ?? '', target: resolvePart(base, target) });
      },
      close() {},
      text() {},
    });
    return out;
  }

  private async readStructure(): Promise<void> {
    const root = await this.relationships('');
    const officeDoc = [...root.values()].find((r) => r.type.endsWith('/officeDocument'))?.target ?? 'xl/workbook.xml';
    const wbEntry = this.zip.find(officeDoc);
    if (!wbEntry)
      throw new WorkbookError('it is not an XLSX workbook: it has no workbook part (is it another kind of ZIP file, or a Word or PowerPoint file?)');
    const rels = await this.relationships(officeDoc);
    const listed: { name: string; rid: string }[] = [];
    await this.scan(wbEntry, {
      capturing: false,
      open(name, attrs) {
        if (name !== 'sheet') return;
        listed.push({ name: attr(attrs, 'name') ?? '', rid: attr(attrs, 'id', true) ?? '' });
      },
      close() {},
      text() {},
    });
    for (const s of listed) {
      const rel = rels.get(s.rid);
      // Chart sheets and dialog sheets hold no cells.
      if (rel && rel.type.endsWith('/worksheet') && this.zip.find(rel.target)) this.sheets.push({ name: s.name, part: rel.target });
    }
    const sst = [...rels.values()].find((r) => r.type.endsWith('/sharedStrings'))?.target;
    const sstEntry = sst ? this.zip.find(sst) : undefined;
    if (sstEntry) await this.readSharedStrings(sstEntry);
  }

  private async readSharedStrings(entry: ZipEntry): Promise<void> {
    const table = this.strings;
    let inSi = false;
    let phonetic = 0;
    let text = '';
    const caps = this.caps;
    const where = this.label;
    const h: XmlHandler = {
      capturing: false,
      open(name, attrs, self) {
        if (name === 'si') {
          inSi = true;
          text = '';
        } else if (name === 'sst') {
          // Excel declares the number of entries: a file over the cap is refused before reading them.
          const declared = Number(attr(attrs, 'uniqueCount') ?? 0);
          if (declared > caps.maxSharedStrings) throw capError('maxSharedStrings', caps, where);
        } else if (name === 'rPh') {
          if (!self) phonetic++;
        } else if (name === 't' && inSi && phonetic === 0 && !self) h.capturing = true;
      },
      close(name) {
        if (name === 't') h.capturing = false;
        else if (name === 'rPh') phonetic = Math.max(0, phonetic - 1);
        else if (name === 'si' && inSi) {
          inSi = false;
          table.push(text);
          text = '';
        }
      },
      text(t) {
        text += t;
        if (text.length > caps.maxCellChars) throw capError('maxCellChars', caps, `${where}: a text of its shared table`);
      },
    };
    await this.scan(entry, h);
  }

  /**
   * The rows of one sheet, a chunk's worth at a time.
   * @param where how limits name the sheet, e.g. `Sheet "returns"`
   */
  async *rows(sheet: SheetInfo, where: string): AsyncGenerator<SheetRow[]> {
    const entry = this.zip.find(sheet.part);
    if (!entry) return;
    const strings = this.strings;
    const caps = this.caps;
    const counter = this.counter;
    let out: SheetRow[] = [];
    let inData = false;
    let rowNumber = 0;
    let rowsCounted = 0;
    let values: unknown[] | null = null;
    let col = 0;
    let type: string | undefined;
    let f: string | null = null;
    let v: string | null = null;
    let target: 'f' | 'v' | null = null;
    let phonetic = 0;
    let nonBlank = false;
    const h: XmlHandler = {
      capturing: false,
      open(name, attrs, self) {
        switch (name) {
          case 'sheetData':
            inData = !self;
            return;
          case 'row': {
            if (!inData) return;
            const r = attr(attrs, 'r');
            rowNumber = r ? parseInt(r, 10) : rowNumber + 1;
            if (!(rowNumber >= 1)) throw new XmlError(`a row has the number "${r}"`);
            values = [];
            col = 0;
            nonBlank = false;
            return;
          }
          case 'c': {
            if (!values) return;
            const ref = attr(attrs, 'r');
            col = (ref ? columnOf(ref) : 0) || col + 1;
            if (col > caps.maxColumns) throw capError('maxColumns', caps, where);
            type = attr(attrs, 't');
            f = null;
            v = null;
            return;
          }
          case 'f':
            if (!values) return;
            f = '';
            if (!self) {
              target = 'f';
              h.capturing = true;
            }
            return;
          case 'v':
            if (!values) return;
            v = '';
            if (!self) {
              target = 'v';
              h.capturing = true;
            }
            return;
          case 'is':
            if (values) v = '';
            return;
          case 'rPh':
            if (!self) phonetic++;
            return;
          case 't':
            if (values && v !== null && phonetic === 0 && !self) {
              target = 'v';
              h.capturing = true;
            }
            return;
        }
      },
      close(name) {
        switch (name) {
          case 'f':
          case 'v':
          case 't':
            h.capturing = false;
            target = null;
            return;
          case 'rPh':
            phonetic = Math.max(0, phonetic - 1);
            return;
          case 'sheetData':
            inData = false;
            return;
          case 'c': {
            if (!values) return;
            const value = cellValue(type, f, v, strings);
            if (value !== undefined) {
              values[col] = value;
              if (value !== '') nonBlank = true;
            }
            return;
          }
          case 'row': {
            if (!values) return;
            if (nonBlank) counter.row(++rowsCounted, values.length - 1, where);
            out.push({ number: rowNumber, values });
            values = null;
            return;
          }
        }
      },
      text(t) {
        if (target === 'f') f += t;
        else if (target === 'v') {
          v += t;
          if (v!.length > caps.maxCellChars) throw capError('maxCellChars', caps, where);
        }
      },
    };
    try {
      const decoder = new TextDecoder('utf-8');
      const scanner = new XmlScanner(h, caps.maxCellChars * 8 + 65536, () => capError('maxCellChars', caps, where));
      for await (const chunk of this.zip.read(entry, this.budget)) {
        scanner.feed(decoder.decode(chunk, { stream: true }));
        if (out.length) {
          const batch = out;
          out = [];
          yield batch;
        }
      }
      scanner.feed(decoder.decode());
      scanner.end();
      if (out.length) yield out;
    } catch (e) {
      throw this.wrap(e);
    }
  }
}

/** The value of a cell as exceljs's reader gives it (worksheet-reader.js), undefined for none. */
function cellValue(t: string | undefined, f: string | null, v: string | null, strings: StringTable): unknown {
  if (f !== null) {
    return { formula: f, result: v === null ? undefined : t === 'str' ? v : parseFloat(v) };
  }
  if (v === null) return undefined;
  switch (t) {
    case 's':
      return strings.get(parseInt(v, 10));
    case 'inlineStr':
    case 'str':
      return v;
    case 'e':
      return { error: v };
    case 'b':
      return parseInt(v, 10) !== 0;
    case 'd':
      return new Date(v);
    default:
      return parseFloat(v);
  }
}

/** The column number (1-based) of a cell reference such as "AB12"; 0 when it has no letters. */
function columnOf(ref: string): number {
  let n = 0;
  for (let i = 0; i < ref.length; i++) {
    const c = ref.charCodeAt(i) | 32; // lower case
    if (c < 97 || c > 122) break;
    n = n * 26 + (c - 96);
    if (n > 1e6) return n;
  }
  return n;
}

/** A relationship target as a part name: relative to `base` unless it starts with "/". */
function resolvePart(base: string, target: string): string {
  const parts = (target.startsWith('/') ? target.slice(1) : base + target).split('/');
  const out: string[] = [];
  for (const p of parts) {
    if (p === '..') out.pop();
    else if (p !== '.' && p !== '') out.push(p);
  }
  return out.join('/');
}

export { CapError };
