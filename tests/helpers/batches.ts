/**
 * Helpers for batch tests: small generated batches on disk, hand-made files, uploading
 * through the real route, and counting what the intake tables hold.
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { DataSource } from 'typeorm';
import type { GenerateOptions } from '../../shared/demo/aldermere';
import { writeCsvBatch, writeXlsxBatch, type WrittenBatch } from '../../server/seed/batch-files';
import type { SignedIn } from './auth';

/** A fresh temporary folder. */
export function tmpDir(prefix = 'plumbline-batch-test-'): string {
  return fs.mkdtempSync(path.join(os.tmpdir(), prefix));
}

/** Rows in every table an intake writes to (the rejected-batch record itself is not a row of the batch). */
export async function countIntakeRows(ds: DataSource): Promise<Record<string, number>> {
  const r = await ds.query(`SELECT
    (SELECT count(*) FROM taxpayer)::int AS taxpayers,
    (SELECT count(*) FROM preparer)::int AS preparers,
    (SELECT count(*) FROM tax_return)::int AS returns,
    (SELECT count(*) FROM line_item)::int AS "lineItems",
    (SELECT count(*) FROM third_party_statement)::int AS statements`);
  return r[0];
}

/**
 * Return references of a generated test batch start with a prefix made from its seed: a
 * reference names one return in the office (issue 14), so two generated batches loaded into
 * one database must not share references for different taxpayers.
 */
export function refPrefixOf(seed: string | number): string {
  return `T${createHash('sha256').update(String(seed)).digest('hex').slice(0, 6).toUpperCase()}`;
}

/** A generated batch as CSV files in a new folder. */
export async function csvBatch(
  opts: Partial<GenerateOptions> & { seed: string | number },
  format?: { crlf?: boolean; bom?: boolean },
): Promise<WrittenBatch & { dir: string }> {
  const dir = tmpDir();
  const w = await writeCsvBatch(dir, { returns: 40, plantShare: 0.1, refPrefix: refPrefixOf(opts.seed), ...opts }, format);
  return { ...w, dir };
}

/** A generated batch as one XLSX workbook. */
export async function xlsxBatch(opts: Partial<GenerateOptions> & { seed: string | number }): Promise<WrittenBatch & { file: string }> {
  const file = path.join(tmpDir(), 'aldermere-batch.xlsx');
  const w = await writeXlsxBatch(file, { returns: 40, plantShare: 0.1, refPrefix: refPrefixOf(opts.seed), ...opts });
  return { ...w, file };
}

/** One part of an upload: a path, or text/bytes with a file name. */
export type Part = string | { name: string; content: string | Buffer };

/** POSTs a batch with the clerk's session and CSRF token. */
export function upload(client: SignedIn, parts: Partial<Record<'file' | 'returns' | 'line_items' | 'statements', Part>>) {
  let req = client.agent.post('/api/batches').set('X-CSRF-Token', client.csrf);
  for (const [field, part] of Object.entries(parts)) {
    if (!part) continue;
    req =
      typeof part === 'string'
        ? req.attach(field, part)
        : req.attach(field, Buffer.isBuffer(part.content) ? part.content : Buffer.from(part.content, 'utf8'), part.name);
  }
  return req;
}

/**
 * An upload the server is expected to refuse before reading it (401/403). The refusal can
 * arrive while the client is still writing the file parts; supertest then closes its
 * one-request server and the last write fails with EPIPE (superagent's "double callback").
 * The answer is what the test asserts, so the upload is sent again, at most three times.
 */
export async function refusedUpload(client: SignedIn, parts: Parameters<typeof upload>[1]) {
  for (let attempt = 1; ; attempt++) {
    try {
      return await upload(client, parts);
    } catch (e) {
      const code = (e as NodeJS.ErrnoException).code;
      if (attempt >= 3 || (code !== 'EPIPE' && code !== 'ECONNRESET')) throw e;
    }
  }
}

/** CSV text from header and rows (joined with the given line ending). */
export function csv(rows: string[], eol = '\n'): string {
  return rows.join(eol) + eol;
}

export const RETURNS_HEADER = 'return_ref,tin,tax_year,taxpayer_name,activity_code,preparer_id,email,postal_address';
export const LINES_HEADER = 'return_ref,line_code,amount';
export const STATEMENTS_HEADER = 'tin,tax_year,kind,payer,amount';
