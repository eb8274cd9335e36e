/**
 * Digit analysis of a list of amounts or an uploaded file: the same profile the `digits`
 * command prints (shared/digits).
 */
import fs from 'node:fs';
import path from 'node:path';
import { AMOUNT_FORMS, digitResult, findAmountErrors, profileAmounts, type DigitProfile, type DigitResult } from '../../shared/digits';
import { HttpError } from '../http/errors';
import { CapError, DEFAULT_READ_CAPS, EXCEL_MAX_ROWS, type ReadCaps } from '../batches/intake/caps';
import { sniff } from '../batches/intake/sources';
import { readAmountsInThread, ReaderDiedError } from '../batches/intake/upload-worker';
import type { AmountFileResult } from './amount-file';

/**
 * Reading caps of an amounts file: one Excel sheet's rows; the rest as for any upload
 * (server/batches/intake/caps.ts).
 */
export const AMOUNT_FILE_CAPS: ReadCaps = { ...DEFAULT_READ_CAPS, maxRows: EXCEL_MAX_ROWS };

/** Profiles JSON amounts; every bad value is reported at once (422). */
export function analyseAmounts(amounts: (number | string)[]): DigitProfile {
  const problems = findAmountErrors(amounts, { max: 100 });
  if (problems.length) {
    throw new HttpError(
      422,
      `${problems.length === 100 ? 'At least 100' : problems.length} value${problems.length === 1 ? ' is' : 's are'} not amounts: ${AMOUNT_FORMS}.`,
      {
        errors: problems.map((p) => ({ index: p.index, message: p.message })),
      },
    );
  }
  return profileAmounts(amounts);
}

async function firstBytes(file: string): Promise<Buffer> {
  const fh = await fs.promises.open(file, 'r');
  try {
    const buf = Buffer.alloc(512);
    const { bytesRead } = await fh.read(buf, 0, buf.length, 0);
    return buf.subarray(0, bytesRead);
  } finally {
    await fh.close();
  }
}

/**
 * Profiles a column of an uploaded file (text, CSV or XLSX, by the original name's
 * extension), split by a second column when `by` is given (the answer then has `split`).
 * The file is read in a worker thread under {@link AMOUNT_FILE_CAPS}.
 * @throws HttpError 422 for a file that is not what its name says or holds a bad value,
 *   413 for a file over a reading limit (the message names it and how to split the file)
 */
export async function analyseFile(storedPath: string, originalName: string, column: string | null, by: string | null): Promise<DigitResult> {
  const read = await readColumn(storedPath, originalName, column, by);
  return digitResult(read, read.groups);
}

/**
 * Reads a column of an uploaded file (and its split column) in the reading thread, with the
 * errors a person should read as HttpErrors naming the file as its sender knows it.
 */
export async function readColumn(
  storedPath: string,
  originalName: string,
  column: string | null,
  by: string | null,
  caps: ReadCaps = AMOUNT_FILE_CAPS,
): Promise<AmountFileResult> {
  const ext = path.extname(originalName).toLowerCase();
  const kind = ext === '.csv' ? 'csv' : ext === '.xlsx' ? 'xlsx' : ext === '.txt' || ext === '' ? 'text' : null;
  if (!kind) throw new HttpError(422, `"${originalName}" is not a .txt, .csv or .xlsx file. Save the amounts in one of those formats.`);
  const found = sniff(await firstBytes(storedPath));
  if (kind === 'xlsx' && found !== 'zip') {
    const what =
      found === 'ole' ? 'an old Excel 97–2003 workbook (.xls)' : found === 'pdf' ? 'a PDF' : found === 'text' ? 'a text file' : 'not an Excel workbook';
    throw new HttpError(
      422,
      `"${originalName}" is named .xlsx but is ${what}. Open it in Excel and save it as an Excel Workbook (.xlsx), or send the amounts as CSV.`,
    );
  }
  if (kind !== 'xlsx' && (found === 'zip' || found === 'ole' || found === 'pdf' || found === 'binary')) {
    throw new HttpError(
      422,
      `"${originalName}" is named ${ext || 'as text'} but holds ${found === 'zip' ? 'a ZIP file (an .xlsx workbook?)' : 'binary data'}. Send amounts as text, CSV UTF-8 or an .xlsx workbook named as such.`,
    );
  }
  // The reader names the file by its stored name; the sender knows it by theirs.
  const stored = path.basename(storedPath);
  const named = (message: string) => {
    const m = message.split(stored).join(originalName);
    return m.startsWith(originalName) ? m : `${originalName}: ${m}`;
  };
  try {
    return await readAmountsInThread(storedPath, column, kind, caps, by);
  } catch (e) {
    if (e instanceof CapError) throw new HttpError(413, named(e.message), { limit: e.cap });
    if (e instanceof ReaderDiedError) throw new HttpError(e.reason === 'memory' ? 413 : 422, named(e.message));
    const kindOf = (e as { kind?: string }).kind;
    if (kindOf === 'amount-file' || kindOf === 'amount-parse') throw new HttpError(422, named((e as Error).message));
    throw e;
  }
}
