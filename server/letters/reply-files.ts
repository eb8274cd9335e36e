/**
 * Checks on the files a taxpayer sends through a reply link. The type is read from the
 * file's first bytes (its signature), not taken from the name or the browser's claim, so a
 * renamed program or web page is refused; names are cleaned before they are stored or
 * shown to staff.
 */
import { createHash } from 'node:crypto';
import { REPLY_FILE_TYPES, REPLY_FILE_WORDS, REPLY_MAX_FILE_BYTES, REPLY_MAX_FILES, REPLY_MAX_TOTAL_BYTES, type ReplyFileType } from '../../shared/letters';
import { HttpError } from '../http/errors';

/** A received file, before checks. */
export interface IncomingFile {
  originalName: string;
  declaredType: string;
  bytes: Buffer;
}

/** A file that passed the checks, ready to store. */
export interface CheckedFile {
  fileName: string;
  contentType: ReplyFileType;
  size: number;
  sha256: string;
  bytes: Buffer;
}

const XLSX_TYPE = 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet';

/**
 * The type a file's content shows: PDF "%PDF-", JPEG FF D8 FF, PNG's 8-byte signature; an
 * XLSX workbook is a ZIP ("PK\x03\x04") whose entries include [Content_Types].xml and
 * xl/workbook.xml; a CSV is UTF-8 text without control characters (tabs and line breaks
 * aside) whose first line has a comma, semicolon or tab and which is not markup.
 */
export function sniffType(bytes: Buffer): ReplyFileType | null {
  if (bytes.length >= 5 && bytes.subarray(0, 5).toString('latin1') === '%PDF-') return 'application/pdf';
  if (bytes.length >= 3 && bytes[0] === 0xff && bytes[1] === 0xd8 && bytes[2] === 0xff) return 'image/jpeg';
  if (bytes.length >= 8 && bytes.subarray(0, 8).equals(Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]))) return 'image/png';
  if (bytes.length >= 4 && bytes.subarray(0, 4).equals(Buffer.from([0x50, 0x4b, 0x03, 0x04]))) {
    return bytes.includes('[Content_Types].xml') && bytes.includes('xl/workbook.xml') ? XLSX_TYPE : null;
  }
  return looksLikeCsv(bytes) ? 'text/csv' : null;
}

function looksLikeCsv(bytes: Buffer): boolean {
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
  } catch {
    return false;
  }
  text = text.replace(/^\uFEFF/, '');
  if (/[\u0000-\u0008\u000b\u000c\u000e-\u001f\u007f]/.test(text)) return false;
  if (/^\s*</.test(text)) return false; // a web page or XML, not a table
  const first = text.split(/\r?\n/, 1)[0];
  return /[,;\t]/.test(first);
}

const EXTENSION: Record<ReplyFileType, string> = {
  'application/pdf': '.pdf',
  'image/jpeg': '.jpg',
  'image/png': '.png',
  'text/csv': '.csv',
  [XLSX_TYPE]: '.xlsx',
};

/** What browsers and mail programs may call a CSV file; its content is what counts. */
const CSV_DECLARED = ['text/plain', 'application/csv', 'application/vnd.ms-excel', 'text/comma-separated-values'];

/**
 * The name as sent, reduced to its last path segment without control or quote characters;
 * '' when nothing usable is left ("", "..", "dir/").
 */
function usableName(original: string): string {
  const base = original.replace(/\\/g, '/').split('/').pop() ?? '';

  const name = base
    .replace(/[\u0000-\u001f\u007f"<>|*?:]/g, '')
    .replace(/\s+/g, ' ')
    .trim();
  return name === '.' || name === '..' ? '' : name;
}

/**
 * A safe display name: the last path segment, without control or quote characters, at most
 * 120 characters, with an extension that matches the real type. A part whose name leaves
 * nothing usable ("", "..", "dir/") is named `document-N` (N its place in the reply), never
 * dropped: a reply is stored whole or not at all.
 */
export function cleanFileName(original: string, type: ReplyFileType, index: number): string {
  let name = usableName(original);
  if (!name) name = `document-${index + 1}`;
  const ext = EXTENSION[type];
  const hasRightExt = type === 'image/jpeg' ? /\.jpe?g$/i.test(name) : name.toLowerCase().endsWith(ext);
  if (!hasRightExt) name = `${name.replace(/\.[A-Za-z0-9]{1,5}$/, '')}${ext}`;
  if (name.length > 120) name = name.slice(0, 120 - ext.length) + ext;
  return name;
}

/**
 * Checks count, size and type of every file; refuses the whole reply (422, naming each
 * problem) when one fails, so a taxpayer never has half a reply stored.
 */
export function checkReplyFiles(files: readonly IncomingFile[]): CheckedFile[] {
  if (files.length === 0) throw new HttpError(422, 'Choose at least one file to send.');
  if (files.length > REPLY_MAX_FILES) throw new HttpError(422, `Send at most ${REPLY_MAX_FILES} files in one reply.`);
  // The declared Content-Length is checked before reading, but a chunked upload has none.
  const total = files.reduce((s, f) => s + f.bytes.length, 0);
  if (total > REPLY_MAX_TOTAL_BYTES)
    throw new HttpError(413, `The files add up to more than ${REPLY_MAX_TOTAL_BYTES / 1024 / 1024} MB; send them in smaller parts or fewer at a time.`);
  const problems: string[] = [];
  const out: CheckedFile[] = [];
  files.forEach((f, i) => {
    const shown = usableName(f.originalName).slice(0, 120) || `File ${i + 1}`;
    if (f.bytes.length === 0) return void problems.push(`${shown} is empty.`);
    if (f.bytes.length > REPLY_MAX_FILE_BYTES) return void problems.push(`${shown} is larger than ${REPLY_MAX_FILE_BYTES / 1024 / 1024} MB.`);
    const type = sniffType(f.bytes);
    if (!type) return void problems.push(`${shown} is not a ${REPLY_FILE_WORDS} file.`);
    const declaredOk =
      !f.declaredType ||
      f.declaredType === 'application/octet-stream' ||
      (REPLY_FILE_TYPES as readonly string[]).includes(f.declaredType) ||
      (type === 'text/csv' && CSV_DECLARED.includes(f.declaredType));
    if (!declaredOk) return void problems.push(`${shown} was sent as ${f.declaredType}; send ${REPLY_FILE_WORDS} files only.`);
    out.push({
      fileName: cleanFileName(f.originalName, type, i),
      contentType: type,
      size: f.bytes.length,
      sha256: createHash('sha256').update(f.bytes).digest('hex'),
      bytes: f.bytes,
    });
  });
  if (problems.length) throw new HttpError(422, problems.join(' '), { problems });
  return out;
}
