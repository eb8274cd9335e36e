/**
 * Reads untrusted uploads in a worker thread with its own memory limit, so a file built to
 * exhaust memory or time ends that thread (a clear 4xx for the sender) and never the
 * server, and the server's event loop keeps answering other requests while a large file is
 * parsed. The thread's body is ./upload-worker-thread.ts.
 */
import path from 'node:path';
import { Worker } from 'node:worker_threads';
import type { BatchIssue, BatchTable } from '../../../shared/returns/batch-rows';
import { CapError, type CapName, type ReadCaps } from './caps';
import { SourceError, type BatchUpload, type RawRow, type TableSource } from './source-types';
import type { AmountFileResult } from '../../analyses/amount-file';

/** Memory of the reading thread's JavaScript heap (the caps keep a file's needs well below). */
export const UPLOAD_THREAD_HEAP_MB = 256;

/** What the thread is asked to do. */
export type UploadJob =
  | { job: 'tables'; upload: BatchUpload; caps: ReadCaps }
  | { job: 'amounts'; file: string; column: string | null; kind: 'csv' | 'xlsx' | 'text'; caps: ReadCaps; by: string | null };

/** An error as it crosses from the thread. */
export type ThreadError =
  | { kind: 'source'; issue: BatchIssue; fatal: boolean }
  | { kind: 'cap'; cap: CapName; message: string }
  | { kind: 'amount-file'; message: string }
  | { kind: 'amount-parse'; message: string }
  | { kind: 'crash'; message: string };

/** Messages from the thread. */
type FromThread =
  | { type: 'sheet'; name: string; table: BatchTable | null }
  | { type: 'table'; seq: number; table: BatchTable; label: string }
  | { type: 'rows'; seq: number; rows: RawRow[] }
  | { type: 'table-end'; seq: number; error?: ThreadError }
  | ({ type: 'amounts' } & AmountFileResult)
  | { type: 'done'; error?: ThreadError }
  | { type: 'ready' }
  | { type: 'died'; reason: 'memory' | 'crash'; message: string };

/** Messages to the thread. */
export type ToThread = { type: 'job'; job: UploadJob } | { type: 'ack' } | { type: 'skip'; seq: number };

/** The thread stopped without finishing: out of memory, or a fault in the reader. */
export class ReaderDiedError extends Error {
  constructor(
    readonly reason: 'memory' | 'crash',
    message: string,
  ) {
    super(message);
  }
}

/** A thread kept for the next upload once its job ended cleanly. */
let idle: Worker | null = null;

/** The thread's messages for one job, taken one at a time. */
class Inbox {
  private readonly queue: FromThread[] = [];
  private waiting: ((m: FromThread) => void) | null = null;
  private dead: FromThread | null = null;
  readonly worker: Worker;
  private readonly onMessage = (m: FromThread) => {
    if (m.type !== 'ready') this.put(m);
  };
  private readonly onError = (e: Error & { code?: string }) => {
    const memory = e.code === 'ERR_WORKER_OUT_OF_MEMORY';
    this.die({ type: 'died', reason: memory ? 'memory' : 'crash', message: e.stack ?? e.message });
  };
  private readonly onExit = (code: number) => this.die({ type: 'died', reason: 'crash', message: `the reading thread ended (exit code ${code})` });

  constructor(job: UploadJob) {
    const reused = idle;
    idle = null;
    this.worker = reused ?? startThread();
    this.worker.ref();
    this.worker.on('message', this.onMessage);
    this.worker.on('error', this.onError);
    this.worker.on('exit', this.onExit);
    this.worker.postMessage({ type: 'job', job } satisfies ToThread);
  }

  /**
   * Ends the job: a thread that answered in full is kept for the next upload (one at most),
   * any other is stopped, whatever it was doing.
   */
  async release(clean: boolean): Promise<void> {
    this.worker.off('message', this.onMessage);
    this.worker.off('error', this.onError);
    this.worker.off('exit', this.onExit);
    if (clean && !this.dead && idle === null) {
      idle = this.worker;
      const w = this.worker;
      w.unref(); // an idle thread keeps no process alive
      return;
    }
    await this.worker.terminate();
  }

  private put(m: FromThread): void {
    const w = this.waiting;
    if (w) {
      this.waiting = null;
      w(m);
    } else this.queue.push(m);
  }

  private die(m: FromThread): void {
    if (this.dead) return;
    this.dead = m;
    this.put(m);
  }

  next(): Promise<FromThread> {
    const m = this.queue.shift();
    if (m) return Promise.resolve(m);
    if (this.dead) return Promise.resolve(this.dead);
    return new Promise((resolve) => (this.waiting = resolve));
  }

  send(m: ToThread): void {
    this.worker.postMessage(m);
  }
}

function startThread(): Worker {
  const w = new Worker(path.join(__dirname, 'upload-worker-entry.js'), {
    execArgv: [],
    resourceLimits: { maxOldGenerationSizeMb: UPLOAD_THREAD_HEAP_MB, maxYoungGenerationSizeMb: 32 },
  });
  // A thread that dies while idle is simply forgotten (a job's own listeners report the rest).
  w.on('error', () => undefined);
  w.once('exit', () => {
    if (idle === w) idle = null;
  });
  return w;
}

/** A {@link ThreadError} as the error the in-thread reader would have thrown. */
function rebuild(e: ThreadError, label: string): Error {
  switch (e.kind) {
    case 'source':
      return new SourceError(e.issue, e.fatal);
    case 'cap':
      return new CapError(e.cap, e.message);
    case 'crash':
      return new Error(`[upload reader] ${e.message}`);
    default:
      return Object.assign(new Error(e.message), { kind: e.kind, label });
  }
}

/** The sentence for a sender whose file took the reading thread down. */
export function diedMessage(reason: 'memory' | 'crash'): string {
  return reason === 'memory'
    ? `Reading the file needed more than the ${UPLOAD_THREAD_HEAP_MB} MB of memory one upload may use. Split the data into several smaller files and send each on its own.`
    : 'The file could not be read: the reader stopped on it. Open it in its program, save it again (as .xlsx or CSV UTF-8) and send it again; if it happens again, split it into smaller files.';
}

/**
 * The tables of an upload, read in a worker thread; same contract as reading them in this
 * thread (server/batches/intake/sources.ts): rows of a table come in batches, errors as
 * {@link SourceError}. The thread ends when the iteration ends, however it ends.
 * @param onSheet told each sheet of a workbook, in the order of its tabs
 */
export async function* uploadTables(
  upload: BatchUpload,
  caps: ReadCaps,
  onSheet: (name: string, table: BatchTable | null) => void,
): AsyncGenerator<TableSource> {
  const inbox = new Inbox({ job: 'tables', upload, caps });
  let clean = false;
  const label = upload.format === 'xlsx' ? upload.workbook.originalName : (Object.values(upload.parts)[0]?.originalName ?? '');
  /** Tables whose rows were read to their end (or abandoned and told to stop). */
  let finished = 0;
  const died = (m: Extract<FromThread, { type: 'died' }>) => {
    if (m.reason === 'crash') console.error(`[intake] upload reader stopped: ${m.message.split('\n')[0]}`);
    return new SourceError({ file: label, row: null, column: null, message: diedMessage(m.reason) }, true);
  };

  async function* rows(seq: number): AsyncGenerator<RawRow[]> {
    try {
      for (;;) {
        const m = await inbox.next();
        if (m.type === 'rows' && m.seq === seq) {
          inbox.send({ type: 'ack' });
          yield m.rows;
        } else if (m.type === 'table-end' && m.seq === seq) {
          if (m.error) throw rebuild(m.error, label);
          return;
        } else if (m.type === 'died') throw died(m);
        else if (m.type === 'sheet') onSheet(m.name, m.table);
      }
    } finally {
      if (finished < seq) {
        finished = seq;
        inbox.send({ type: 'skip', seq });
      }
    }
  }

  try {
    for (;;) {
      const m = await inbox.next();
      switch (m.type) {
        case 'sheet':
          onSheet(m.name, m.table);
          break;
        case 'table':
          yield { table: m.table, label: m.label, rows: rows(m.seq) };
          // Rows the reader did not take (a second table of a kind is not read) are not wanted.
          if (finished < m.seq) {
            finished = m.seq;
            inbox.send({ type: 'skip', seq: m.seq });
          }
          break;
        case 'rows':
          inbox.send({ type: 'ack' }); // of a table already left
          break;
        case 'table-end':
          if (m.error && m.error.kind === 'source' && m.error.fatal && m.seq > finished) throw rebuild(m.error, label);
          break;
        case 'done':
          clean = true;
          if (m.error) throw rebuild(m.error, label);
          return;
        case 'died':
          throw died(m);
        default:
          break;
      }
    }
  } finally {
    await inbox.release(clean);
  }
}

/**
 * Reads the amounts of a file in a worker thread (server/analyses/amount-file.ts there).
 * @throws CapError, Error with `kind` 'amount-file' | 'amount-parse' (the file's fault),
 *   ReaderDiedError (the thread ran out of memory or stopped)
 */
export async function readAmountsInThread(
  file: string,
  column: string | null,
  kind: 'csv' | 'xlsx' | 'text',
  caps: ReadCaps,
  by: string | null = null,
): Promise<AmountFileResult> {
  const inbox = new Inbox({ job: 'amounts', file, column, kind, caps, by });
  let clean = false;
  try {
    for (;;) {
      const m = await inbox.next();
      if (m.type === 'amounts') {
        clean = true;
        return { cents: m.cents, wide: m.wide, what: m.what, groups: m.groups };
      }
      if (m.type === 'done') {
        clean = true;
        throw m.error ? rebuild(m.error, file) : new Error('[upload reader] ended without an answer');
      }
      if (m.type === 'died') {
        if (m.reason === 'crash') console.error(`[analyses] upload reader stopped: ${m.message.split('\n')[0]}`);
        throw new ReaderDiedError(m.reason, diedMessage(m.reason));
      }
    }
  } finally {
    await inbox.release(clean);
  }
}
