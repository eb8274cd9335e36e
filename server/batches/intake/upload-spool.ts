/**
 * Where uploads wait on disk while they are read: the project's data folder
 * (`.data/uploads`, folder 0700, files 0600), never the shared system temp folder, where
 * other local users could read taxpayers' files. Each file is removed by the request that
 * received it; files of a server that crashed are removed when a server starts
 * ({@link cleanUploadSpool}). Spool file names start with the receiving process's id, so a
 * starting server never removes the files of another server or test run still at work.
 */
import { randomUUID } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import type { Request } from 'express';
import type multer from 'multer';

/** The spool folder: `PLUMBLINE_UPLOAD_DIR`, or `.data/uploads` in the project. */
export function uploadSpoolDir(): string {
  return process.env.PLUMBLINE_UPLOAD_DIR || path.resolve(__dirname, '..', '..', '..', '.data', 'uploads');
}

/** Creates the spool folder (0700) if needed and returns it. */
export function ensureUploadSpool(): string {
  const dir = uploadSpoolDir();
  fs.mkdirSync(dir, { recursive: true, mode: 0o700 });
  fs.chmodSync(dir, 0o700);
  return dir;
}

function alive(pid: number): boolean {
  if (pid === process.pid) return true;
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === 'EPERM';
  }
}

/**
 * Removes spool files left by processes that are no longer running (a server killed while
 * it read an upload). Called once at server start.
 * @returns how many files were removed
 */
export function cleanUploadSpool(): number {
  const dir = ensureUploadSpool();
  let removed = 0;
  for (const name of fs.readdirSync(dir)) {
    const pid = Number(/^(\d+)-/.exec(name)?.[1] ?? NaN);
    if (Number.isInteger(pid) && alive(pid)) continue;
    fs.rmSync(path.join(dir, name), { recursive: true, force: true });
    removed++;
  }
  return removed;
}

/** A new spool path for this process (the file is not created). */
export function spoolPath(suffix = ''): string {
  return path.join(ensureUploadSpool(), `${process.pid}-${randomUUID()}${suffix}`);
}

/**
 * multer storage writing each file to the spool with mode 0600 (multer's disk storage
 * creates files readable by every local user). The file is gone once the request that
 * received it calls `removeSpooled`.
 */
export function spoolStorage(): multer.StorageEngine {
  return {
    _handleFile(_req: Request, file: Express.Multer.File, cb: (error?: unknown, info?: Partial<Express.Multer.File>) => void) {
      const target = spoolPath();
      const out = fs.createWriteStream(target, { mode: 0o600, flags: 'wx' });
      let size = 0;
      file.stream.on('data', (chunk: Buffer) => (size += chunk.length));
      file.stream.on('error', (e) => {
        out.destroy();
        fs.rm(target, { force: true }, () => cb(e));
      });
      out.on('error', (e) => fs.rm(target, { force: true }, () => cb(e)));
      out.on('finish', () => cb(null, { path: target, size, destination: path.dirname(target), filename: path.basename(target) }));
      file.stream.pipe(out);
    },
    _removeFile(_req: Request, file: Express.Multer.File, cb: (error: Error | null) => void) {
      fs.rm(file.path, { force: true }, (e) => cb(e ?? null));
    },
  };
}

/** Removes spooled files (the end of every request that received some). */
export async function removeSpooled(files: Iterable<{ path: string }>): Promise<void> {
  await Promise.all([...files].map((f) => fs.promises.rm(f.path, { force: true })));
}
