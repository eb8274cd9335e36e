/**
 * Random-access reading of a ZIP file on disk (an XLSX workbook is one): the central
 * directory at the end lists the parts, and each part is inflated as a stream on demand.
 * Every inflated byte is counted against one budget shared by all the parts read, so a
 * small file that unpacks to gigabytes is stopped at the budget, whatever sizes its
 * directory declares. Format: PKWARE APPNOTE.TXT sections 4.3.7 (local header), 4.3.12
 * (central directory header) and 4.3.16 (end of central directory).
 */
import fs from 'node:fs';
import zlib from 'node:zlib';

/** The file is not a ZIP file this reader can open (damaged, encrypted, ZIP64…). */
export class ZipError extends Error {}

/** One part as the central directory lists it. */
export interface ZipEntry {
  name: string;
  method: number;
  compressedSize: number;
  localHeaderOffset: number;
  encrypted: boolean;
}

/** Called with each inflated chunk's size; throws to stop (the budget is spent). */
export type InflateBudget = (bytes: number) => void;

const EOCD = 0x06054b50;
const CDH = 0x02014b50;
const LFH = 0x04034b50;

async function readAt(fh: fs.promises.FileHandle, position: number, length: number): Promise<Buffer> {
  const buf = Buffer.alloc(length);
  const { bytesRead } = await fh.read(buf, 0, length, position);
  return buf.subarray(0, bytesRead);
}

/** An open ZIP file: its entries by name. */
export class ZipFile {
  private constructor(
    private readonly path: string,
    private readonly fh: fs.promises.FileHandle,
    readonly entries: Map<string, ZipEntry>,
  ) {}

  /** Opens a ZIP file and reads its central directory. */
  static async open(path: string): Promise<ZipFile> {
    const fh = await fs.promises.open(path, 'r');
    try {
      const size = (await fh.stat()).size;
      const tailLength = Math.min(size, 22 + 0xffff);
      const tail = await readAt(fh, size - tailLength, tailLength);
      let at = -1;
      for (let i = tail.length - 22; i >= 0; i--) {
        if (tail.readUInt32LE(i) === EOCD) {
          at = i;
          break;
        }
      }
      if (at < 0) throw new ZipError('no ZIP directory was found at the end of the file (the file is cut short or is not a ZIP file)');
      const count = tail.readUInt16LE(at + 10);
      const dirSize = tail.readUInt32LE(at + 12);
      const dirOffset = tail.readUInt32LE(at + 16);
      if (count === 0xffff || dirSize === 0xffffffff || dirOffset === 0xffffffff)
        throw new ZipError('it is a ZIP64 file, which a workbook of an accepted size never needs');
      if (dirOffset + dirSize > size) throw new ZipError('its ZIP directory points past the end of the file');
      const dir = await readAt(fh, dirOffset, dirSize);
      const entries = new Map<string, ZipEntry>();
      let p = 0;
      for (let i = 0; i < count; i++) {
        if (p + 46 > dir.length || dir.readUInt32LE(p) !== CDH) throw new ZipError('its ZIP directory is damaged');
        const flags = dir.readUInt16LE(p + 8);
        const method = dir.readUInt16LE(p + 10);
        const compressedSize = dir.readUInt32LE(p + 20);
        const nameLength = dir.readUInt16LE(p + 28);
        const extraLength = dir.readUInt16LE(p + 30);
        const commentLength = dir.readUInt16LE(p + 32);
        const localHeaderOffset = dir.readUInt32LE(p + 42);
        const name = dir.toString('utf8', p + 46, p + 46 + nameLength);
        entries.set(name, { name, method, compressedSize, localHeaderOffset, encrypted: (flags & 1) !== 0 });
        p += 46 + nameLength + extraLength + commentLength;
      }
      return new ZipFile(path, fh, entries);
    } catch (e) {
      await fh.close();
      throw e;
    }
  }

  /** The entry of that name, matched without regard to case (Excel's part names are not case-sensitive). */
  find(name: string): ZipEntry | undefined {
    const exact = this.entries.get(name);
    if (exact) return exact;
    const lower = name.toLowerCase();
    for (const e of this.entries.values()) if (e.name.toLowerCase() === lower) return e;
    return undefined;
  }

  /**
   * The inflated content of one entry, as chunks; `budget` is told each chunk's size first.
   */
  async *read(entry: ZipEntry, budget: InflateBudget): AsyncGenerator<Buffer> {
    if (entry.encrypted) throw new ZipError(`its part ${entry.name} is encrypted (the workbook has a password)`);
    if (entry.method !== 0 && entry.method !== 8)
      throw new ZipError(`its part ${entry.name} uses a compression method (${entry.method}) that Excel never writes`);
    const header = await readAt(this.fh, entry.localHeaderOffset, 30);
    if (header.length < 30 || header.readUInt32LE(0) !== LFH) throw new ZipError(`its part ${entry.name} is damaged`);
    const start = entry.localHeaderOffset + 30 + header.readUInt16LE(26) + header.readUInt16LE(28);
    if (entry.compressedSize === 0) return;
    const raw = fs.createReadStream(this.path, { start, end: start + entry.compressedSize - 1, highWaterMark: 256 * 1024 });
    const source = entry.method === 8 ? raw.pipe(zlib.createInflateRaw({ chunkSize: 256 * 1024 })) : raw;
    raw.on('error', (e) => source.destroy(e));
    try {
      for await (const chunk of source) {
        budget((chunk as Buffer).length);
        yield chunk as Buffer;
      }
    } catch (e) {
      if (e instanceof Error && 'code' in e && String((e as { code?: unknown }).code).startsWith('Z_'))
        throw new ZipError(`its part ${entry.name} cannot be unpacked (${e.message})`);
      throw e;
    } finally {
      raw.destroy();
      source.destroy();
    }
  }

  async close(): Promise<void> {
    await this.fh.close();
  }
}
