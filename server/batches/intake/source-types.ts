/**
 * What the intake's readers hand on: uploaded files, tables as streams of rows, and the
 * error that stops reading a file. Kept apart from the readers so the CSV reader, the XLSX
 * reader and the worker-thread bridge share them without importing one another.
 */
import type { BatchIssue, BatchTable } from '../../../shared/returns/batch-rows';

/** A file as received (multer wrote it to the upload spool). */
export interface UploadedFile {
  /** Name on the clerk's computer, e.g. "returns.csv". */
  originalName: string;
  path: string;
  size: number;
}

/** What was uploaded: one workbook, or one CSV file per table. */
export type BatchUpload = { format: 'xlsx'; workbook: UploadedFile } | { format: 'csv'; parts: Partial<Record<BatchTable, UploadedFile>> };

/** One row as read: its number as a spreadsheet shows it, its cells as trimmed text. */
export interface RawRow {
  row: number;
  cells: string[];
  /** Per cell, why it could not be read (XLSX only: formulas without values, errors…). */
  problems: (string | undefined)[] | null;
}

/**
 * One table of the upload and its rows (the header row first), in batches of rows: one
 * await per batch instead of per row matters at a million rows.
 */
export interface TableSource {
  table: BatchTable;
  /** How errors name it: "returns.csv" or "batch.xlsx › returns". */
  label: string;
  rows: AsyncIterable<RawRow[]>;
}

/** Rows handed on per batch. */
export const ROWS_PER_BATCH = 4096;

/** A file that cannot be read any further; `fatal` stops the whole upload. */
export class SourceError extends Error {
  constructor(
    readonly issue: BatchIssue,
    readonly fatal: boolean,
  ) {
    super(issue.message);
  }
}
