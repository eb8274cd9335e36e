/**
 * The body of the upload-reading worker thread (started by ./upload-worker.ts). It reads
 * one upload at a time as told by a 'job' message and posts what it finds: the rows of a
 * batch's tables (at most a few batches ahead of what the server has taken), or the
 * amounts of a digit analysis. Errors are posted as plain data. A thread that finished its
 * job cleanly may be given the next one (loading the readers costs about a second).
 */
import { parentPort } from 'node:worker_threads';
import { AmountParseError } from '../../../shared/digits/parse';
import type { AmountFileError as AmountFileErrorType } from '../../analyses/amount-file';
import { CapError } from './caps';
import { SourceError } from './source-types';
import type { ThreadError, ToThread, UploadJob } from './upload-worker';

/** Row batches posted and not yet taken by the server. */
const WINDOW = 4;

const port = parentPort!;

let credits = WINDOW;
let skipSeq = 0;
let wake: (() => void) | null = null;
// Each reader is loaded when first needed: the amounts reader needs no zod schemas.
let AmountFileError: typeof AmountFileErrorType | null = null;
port.on('message', (m: ToThread) => {
  if (m.type === 'job') {
    credits = WINDOW;
    skipSeq = 0;
    void main(m.job);
    return;
  }
  if (m.type === 'ack') credits++;
  else if (m.type === 'skip') skipSeq = Math.max(skipSeq, m.seq);
  const w = wake;
  wake = null;
  w?.();
});

function toMessage(e: unknown): ThreadError {
  if (e instanceof SourceError) return { kind: 'source', issue: e.issue, fatal: e.fatal };
  if (e instanceof CapError) return { kind: 'cap', cap: e.cap, message: e.message };
  if (AmountFileError && e instanceof AmountFileError) return { kind: 'amount-file', message: e.message };
  if (e instanceof AmountParseError) return { kind: 'amount-parse', message: e.message };
  return { kind: 'crash', message: e instanceof Error ? (e.stack ?? e.message) : String(e) };
}

async function runTables(j: Extract<UploadJob, { job: 'tables' }>): Promise<void> {
  // eslint-disable-next-line @typescript-eslint/no-require-imports
  const { uploadTablesInline } = require('./sources') as typeof import('./sources');
  let seq = 0;
  const sources = uploadTablesInline(j.upload, j.caps, (name, table) => port.postMessage({ type: 'sheet', name, table }));
  for await (const src of sources) {
    const s = ++seq;
    port.postMessage({ type: 'table', seq: s, table: src.table, label: src.label });
    try {
      for await (const rows of src.rows) {
        while (credits <= 0 && skipSeq < s) await new Promise<void>((r) => (wake = r));
        if (skipSeq >= s) break;
        credits--;
        port.postMessage({ type: 'rows', seq: s, rows });
      }
      port.postMessage({ type: 'table-end', seq: s });
    } catch (e) {
      port.postMessage({ type: 'table-end', seq: s, error: toMessage(e) });
      if (!(e instanceof SourceError) || e.fatal) return;
    }
  }
}

async function main(job: UploadJob): Promise<void> {
  try {
    if (job.job === 'tables') {
      await runTables(job);
      port.postMessage({ type: 'done' });
    } else {
      // eslint-disable-next-line @typescript-eslint/no-require-imports
      const amounts = require('../../analyses/amount-file') as typeof import('../../analyses/amount-file');
      AmountFileError = amounts.AmountFileError;
      const { cents, wide, what, groups } = await amounts.readAmountsFile(job.file, job.column, job.kind, job.caps, job.by);
      const copy = new Float64Array(cents); // its own buffer, handed over without a copy
      port.postMessage({ type: 'amounts', cents: copy, wide, what, groups }, [copy.buffer]);
    }
  } catch (e) {
    port.postMessage({ type: 'done', error: toMessage(e) });
  }
}

port.postMessage({ type: 'ready' });
