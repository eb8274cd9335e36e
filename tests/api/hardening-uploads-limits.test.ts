/**
 * Issue 12, items 1 and 5: each reading cap stops a file at the first crossing with a
 * message that names the limit and how to split the file, in the thread that reads uploads;
 * upload spool files are private (0600 in a 0700 folder) and those of a dead server are
 * removed at start-up. No database: the readers and the spool are driven directly.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { PassThrough, Readable } from 'node:stream';
import zlib from 'node:zlib';
import { DEFAULT_READ_CAPS, type ReadCaps } from '../../server/batches/intake/caps';
import { csvRows, SourceError } from '../../server/batches/intake/sources';
import { cleanUploadSpool, spoolStorage } from '../../server/batches/intake/upload-spool';
import { readAmountsInThread } from '../../server/batches/intake/upload-worker';
import { WorkbookError, XlsxReader } from '../../server/batches/intake/xlsx-source';

jest.setTimeout(120_000);

let dir: string;
beforeAll(() => (dir = fs.mkdtempSync(path.join(os.tmpdir(), 'plumbline-limits-'))));
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

/**
 * A ZIP file written by hand (PKWARE APPNOTE.TXT 4.3.7, 4.3.12, 4.3.16): deflated entries,
 * sizes in the local headers and the directory, no data descriptors.
 */
function zipFile(name: string, entries: Record<string, Buffer>): string {
  const local: Buffer[] = [];
  const central: Buffer[] = [];
  let offset = 0;
  for (const [entry, content] of Object.entries(entries)) {
    const data = zlib.deflateRawSync(content);
    const nameBuf = Buffer.from(entry);
    const crc = zlib.crc32 ? zlib.crc32(content) : 0;
    const lh = Buffer.alloc(30);
    lh.writeUInt32LE(0x04034b50, 0);
    lh.writeUInt16LE(20, 4);
    lh.writeUInt16LE(8, 8);
    lh.writeUInt32LE(crc >>> 0, 14);
    lh.writeUInt32LE(data.length, 18);
    lh.writeUInt32LE(content.length, 22);
    lh.writeUInt16LE(nameBuf.length, 26);
    const ch = Buffer.alloc(46);
    ch.writeUInt32LE(0x02014b50, 0);
    ch.writeUInt16LE(20, 4);
    ch.writeUInt16LE(20, 6);
    ch.writeUInt16LE(8, 10);
    ch.writeUInt32LE(crc >>> 0, 16);
    ch.writeUInt32LE(data.length, 20);
    ch.writeUInt32LE(content.length, 24);
    ch.writeUInt16LE(nameBuf.length, 28);
    ch.writeUInt32LE(offset, 42);
    local.push(lh, nameBuf, data);
    central.push(ch, nameBuf);
    offset += 30 + nameBuf.length + data.length;
  }
  const dirBuf = Buffer.concat(central);
  const end = Buffer.alloc(22);
  end.writeUInt32LE(0x06054b50, 0);
  end.writeUInt16LE(Object.keys(entries).length, 8);
  end.writeUInt16LE(Object.keys(entries).length, 10);
  end.writeUInt32LE(dirBuf.length, 12);
  end.writeUInt32LE(offset, 16);
  const file = path.join(dir, name);
  fs.writeFileSync(file, Buffer.concat([...local, dirBuf, end]));
  return file;
}

const REL = 'http://schemas.openxmlformats.org/officeDocument/2006/relationships';
function workbook(name: string, sheetXml: string | Buffer, sharedStrings?: string): string {
  return zipFile(name, {
    'xl/workbook.xml': Buffer.from(`<workbook xmlns:r="${REL}"><sheets><sheet name="amounts" sheetId="1" r:id="rId1"/></sheets></workbook>`),
    'xl/_rels/workbook.xml.rels': Buffer.from(
      `<Relationships><Relationship Id="rId1" Type="${REL}/worksheet" Target="worksheets/sheet1.xml"/><Relationship Id="rId2" Type="${REL}/sharedStrings" Target="sharedStrings.xml"/></Relationships>`,
    ),
    ...(sharedStrings ? { 'xl/sharedStrings.xml': Buffer.from(sharedStrings) } : {}),
    'xl/worksheets/sheet1.xml': typeof sheetXml === 'string' ? Buffer.from(sheetXml) : sheetXml,
  });
}

async function readAll(file: string, caps: ReadCaps) {
  const reader = await XlsxReader.open(file, caps, path.basename(file));
  const rows: unknown[][] = [];
  try {
    for (const s of reader.sheets) for await (const batch of reader.rows(s, `sheet "${s.name}"`)) for (const r of batch) rows.push(r.values);
  } finally {
    await reader.close();
  }
  return rows;
}

const caps = (over: Partial<ReadCaps>): ReadCaps => ({ ...DEFAULT_READ_CAPS, ...over });

describe('XLSX reading caps', () => {
  it('reads values as exceljs did: shared and inline strings, numbers, formulas, errors, x: prefixes', async () => {
    const file = workbook(
      'values.xlsx',
      `<x:worksheet xmlns:x="main"><x:sheetData><x:row r="1"><x:c r="A1" t="s"><x:v>0</x:v></x:c><x:c r="C1" t="inlineStr"><x:is><x:t>in&amp;line</x:t></x:is></x:c></x:row>` +
        `<x:row r="2"><x:c r="A2"><x:v>12.5</x:v></x:c><x:c r="B2"><x:f>A2*2</x:f><x:v>25</x:v></x:c><x:c r="C2" t="e"><x:v>#N/A</x:v></x:c><x:c r="D2" t="b"><x:v>1</x:v></x:c></x:row></x:sheetData></x:worksheet>`,
      '<sst count="1" uniqueCount="1"><si><r><t>rich </t></r><r><t>text</t></r><rPh><t>phonetic</t></rPh></si></sst>',
    );
    const rows = await readAll(file, DEFAULT_READ_CAPS);
    expect(rows[0]).toEqual([undefined, 'rich text', undefined, 'in&line']);
    expect(rows[1]).toEqual([undefined, 12.5, { formula: 'A2*2', result: 25 }, { error: '#N/A' }, true]);
  });

  it('stops a part that inflates past the budget (a ZIP bomb) at the budget', async () => {
    // 64 MB of one repeated row deflates to well under 1 MB.
    const row = Buffer.from('<row><c><v>1</v></c></row>');
    const body = Buffer.alloc(64 * 1024 * 1024, row);
    const file = workbook('bomb.xlsx', Buffer.concat([Buffer.from('<worksheet><sheetData>'), body, Buffer.from('</sheetData></worksheet>')]));
    expect(fs.statSync(file).size).toBeLessThan(1024 * 1024);
    await expect(readAll(file, caps({ maxInflatedBytes: 16 * 1024 * 1024, maxRows: 1e9, maxCells: 1e9 }))).rejects.toMatchObject({
      cap: 'maxInflatedBytes',
      message: expect.stringMatching(/^bomb\.xlsx: the workbook unpacks to more than 16 MB.*Split the data into several smaller files/),
    });
  });

  it('stops at too many cells, too wide a row, too long a cell, too many shared strings', async () => {
    const sheet = (rows: string) => `<worksheet><sheetData>${rows}</sheetData></worksheet>`;
    await expect(readAll(workbook('cells.xlsx', sheet('<row><c><v>1</v></c><c><v>2</v></c></row>'.repeat(10))), caps({ maxCells: 15 }))).rejects.toMatchObject({
      cap: 'maxCells',
    });
    await expect(readAll(workbook('wide.xlsx', sheet('<row><c r="XFE1"><v>1</v></c></row>')), DEFAULT_READ_CAPS)).rejects.toMatchObject({
      cap: 'maxColumns',
      message: expect.stringMatching(/more than 16,384 cells/),
    });
    await expect(
      readAll(workbook('long.xlsx', sheet(`<row><c t="inlineStr"><is><t>${'x'.repeat(40_000)}</t></is></c></row>`)), DEFAULT_READ_CAPS),
    ).rejects.toMatchObject({
      cap: 'maxCellChars',
      message: expect.stringMatching(/more than 32,767 characters \(Excel's own limit\)/),
    });
    const sst = (n: number, declared: string) => `<sst${declared}>${'<si><t>a</t></si>'.repeat(n)}</sst>`;
    await expect(readAll(workbook('strings.xlsx', sheet(''), sst(11, '')), caps({ maxSharedStrings: 10 }))).rejects.toMatchObject({ cap: 'maxSharedStrings' });
    await expect(readAll(workbook('declared.xlsx', sheet(''), sst(1, ' uniqueCount="99"')), caps({ maxSharedStrings: 10 }))).rejects.toMatchObject({
      cap: 'maxSharedStrings',
    });
    await expect(readAll(workbook('rows.xlsx', sheet('<row><c><v>1</v></c></row>'.repeat(6))), caps({ maxRows: 5 }))).rejects.toMatchObject({
      cap: 'maxRows',
      message: expect.stringMatching(/more than 5 rows/),
    });
  });

  it('refuses a DOCTYPE (entity bombs) and a file that is not a ZIP, as unreadable workbooks', async () => {
    const doctype = workbook('doctype.xlsx', '<!DOCTYPE x [<!ENTITY a "aaaa">]><worksheet><sheetData/></worksheet>');
    await expect(readAll(doctype, DEFAULT_READ_CAPS)).rejects.toThrow(WorkbookError);
    const notZip = path.join(dir, 'not.xlsx');
    fs.writeFileSync(notZip, 'amount\n1\n');
    await expect(readAll(notZip, DEFAULT_READ_CAPS)).rejects.toThrow(/no ZIP directory/);
  });

  it('reports a cap crossed in the reading thread as the same CapError', async () => {
    const file = workbook('thread.xlsx', `<worksheet><sheetData>${'<row><c><v>1</v></c></row>'.repeat(20)}</sheetData></worksheet>`);
    await expect(readAmountsInThread(file, null, 'xlsx', caps({ maxRows: 10 }))).rejects.toMatchObject({ cap: 'maxRows' });
    // And the thread is still good for the next file.
    const ok = workbook(
      'ok.xlsx',
      `<worksheet><sheetData><row><c t="inlineStr"><is><t>amount</t></is></c></row><row><c><v>12.5</v></c></row></sheetData></worksheet>`,
    );
    const r = await readAmountsInThread(ok, null, 'xlsx', DEFAULT_READ_CAPS);
    expect(Array.from(r.cents)).toEqual([1250]);
  });
});

describe('CSV reading caps', () => {
  async function read(content: string, c: ReadCaps) {
    const file = path.join(dir, `f-${Math.random().toString(36).slice(2)}.csv`);
    fs.writeFileSync(file, content);
    const rows = [];
    for await (const b of csvRows({ originalName: 'returns.csv', path: file, size: content.length }, { caps: c })) rows.push(...b);
    return rows;
  }

  it('stops a line that never ends and too many rows with a fatal error naming the limit; blank lines are free', async () => {
    await expect(read('a,b\n' + 'x'.repeat(5000), caps({ maxLineChars: 1000 }))).rejects.toMatchObject({
      fatal: true,
      issue: { file: 'returns.csv', message: expect.stringMatching(/a line of more than 1,000 characters/) },
    });
    await expect(read('a,"b\n' + 'x'.repeat(5000) + '"\n', caps({ maxLineChars: 1000 }))).rejects.toBeInstanceOf(SourceError);
    await expect(read('a\n1\n2\n3\n', caps({ maxRows: 3 }))).rejects.toMatchObject({
      fatal: true,
      issue: { message: expect.stringMatching(/more than 3 rows.*Split/) },
    });
    expect(await read('a\n1\n\n\n2\n', caps({ maxRows: 3 }))).toHaveLength(5);
  });
});

describe('upload spool', () => {
  const spool = () => path.resolve(__dirname, '..', '..', '.data', 'uploads');

  it('writes uploads 0600 in a 0700 folder and removes them when asked', async () => {
    const storage = spoolStorage();
    const stream = new PassThrough();
    const info = await new Promise<Partial<Express.Multer.File>>((resolve, reject) => {
      storage._handleFile({} as never, { stream } as unknown as Express.Multer.File, (e, i) => (e ? reject(e) : resolve(i!)));
      Readable.from([Buffer.from('amount\n1.00\n')]).pipe(stream);
    });
    expect(path.dirname(info.path!)).toBe(spool());
    expect(path.basename(info.path!)).toMatch(new RegExp(`^${process.pid}-`));
    expect(info.size).toBe(12);
    expect(fs.statSync(info.path!).mode & 0o777).toBe(0o600);
    expect(fs.statSync(spool()).mode & 0o777).toBe(0o700);
    await new Promise<void>((resolve) => storage._removeFile({} as never, info as Express.Multer.File, () => resolve()));
    expect(fs.existsSync(info.path!)).toBe(false);
  });

  it('removes at start-up the files of a server that is gone, and keeps those of live ones', () => {
    // A pid far above any Linux pid_max (4,194,304): no process has it.
    const dead = path.join(spool(), '99999999-left-by-a-crash');
    const mine = path.join(spool(), `${process.pid}-still-reading`);
    fs.writeFileSync(dead, 'x', { mode: 0o600 });
    fs.writeFileSync(mine, 'x', { mode: 0o600 });
    try {
      expect(cleanUploadSpool()).toBeGreaterThanOrEqual(1);
      expect(fs.existsSync(dead)).toBe(false);
      expect(fs.existsSync(mine)).toBe(true);
    } finally {
      fs.rmSync(mine, { force: true });
      fs.rmSync(dead, { force: true });
    }
  });
});
