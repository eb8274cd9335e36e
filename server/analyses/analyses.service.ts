/**
 * Digit analysis of a list of amounts or an uploaded file: the same profile the `digits`
 * command prints (shared/digits).
 */
import path from 'node:path';
import { findAmountErrors, profileAmounts, profileCents, AmountParseError, type DigitProfile } from '../../shared/digits';
import { HttpError } from '../http/errors';
import { AmountFileError, readAmountsFile } from './amount-file';

/** Profiles JSON amounts; every bad value is reported at once (422). */
export function analyseAmounts(amounts: (number | string)[]): DigitProfile {
  const problems = findAmountErrors(amounts, { max: 100 });
  if (problems.length) {
    throw new HttpError(422, `${problems.length === 100 ? 'At least 100' : problems.length} value${problems.length === 1 ? ' is' : 's are'} not amounts. Use digits with an optional minus sign and at most 2 decimals, e.g. -1234.50.`, {
      errors: problems.map((p) => ({ index: p.index, message: p.message })),
    });
  }
  return profileAmounts(amounts);
}

/** Profiles a column of an uploaded file (text, CSV or XLSX, by the original name's extension). */
export async function analyseFile(storedPath: string, originalName: string, column: string | null): Promise<DigitProfile> {
  const ext = path.extname(originalName).toLowerCase();
  const kind = ext === '.csv' ? 'csv' : ext === '.xlsx' ? 'xlsx' : ext === '.txt' || ext === '' ? 'text' : null;
  if (!kind) throw new HttpError(422, `"${originalName}" is not a .txt, .csv or .xlsx file. Save the amounts in one of those formats.`);
  try {
    const { cents } = await readAmountsFile(storedPath, column, kind);
    return profileCents(cents);
  } catch (e) {
    if (e instanceof AmountParseError || e instanceof AmountFileError) throw new HttpError(422, `${originalName}: ${e.message}`);
    throw e;
  }
}
