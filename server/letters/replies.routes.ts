/**
 * The taxpayer's reply link (no account; publicAccess; the token is the key):
 *  - `GET /api/replies/:token` → {state: 'open', taxpayerName, items, dueDate, office,
 *    limits}; 404 unknown link; 410 {error, state: 'answered' | 'expired'};
 *  - `POST /api/replies/:token` multipart, files in the `files` field (PDF, JPEG, PNG, CSV or XLSX;
 *    REPLY_MAX_FILES files of at most REPLY_MAX_FILE_BYTES, REPLY_MAX_TOTAL_BYTES together)
 *    and `complete` ("true" when that is everything; then no file is needed after an earlier
 *    send) → 201 {received, receivedAt, part, complete, dueDate, acknowledgement}. The link
 *    takes several sends until the due date or until one says that is everything.
 *
 * The link is checked before the body is read, so an unknown or used link costs no upload;
 * files are held in memory (bounded by the limits) and stored in the database with the case,
 * all of them in one transaction or none (and then the link stays usable).
 */
import type { IncomingHttpHeaders } from 'node:http';
import type { Readable, Writable } from 'node:stream';
import type { Request, RequestHandler } from 'express';
import { REPLY_MAX_FILE_BYTES, REPLY_MAX_FILES, REPLY_MAX_TOTAL_BYTES } from '../../shared/letters';
import { auditOf, type AuditContext } from '../access-log/audit-context';
import { publicAccess, secureRouter } from '../auth/access';
import { HttpError } from '../http/errors';
import type { LetterDeps } from './letters.service';
import { getReplyRequest, openRequest, receiveReply } from './replies.service';

const MB = 1024 * 1024;

// The refusals of the limits, each worded once (a limit can be met at more than one point).
const tooMuch = () => new HttpError(413, `The files together are larger than ${REPLY_MAX_TOTAL_BYTES / MB} MB. Send fewer or smaller files.`);
const fileTooBig = () =>
  new HttpError(413, `A file is larger than ${REPLY_MAX_FILE_BYTES / MB} MB. Scan it at a lower resolution or split it, then send again.`);
const tooManyFiles = () => new HttpError(422, `Send at most ${REPLY_MAX_FILES} files in one reply.`);

/** Refuses a body over the total limit by its declared length, before reading it. */
const totalLimit: RequestHandler = (req, _res, next) => {
  const declared = Number(req.get('content-length') ?? 0);
  // Multipart framing adds a little per part; allow 64 KB for it.
  if (declared > REPLY_MAX_TOTAL_BYTES + 64 * 1024) return next(tooMuch());
  next();
};

/** busboy (multer's parser), typed for what is used here. */
// eslint-disable-next-line @typescript-eslint/no-require-imports
const busboy = require('busboy') as (cfg: {
  headers: IncomingHttpHeaders;
  preservePath: boolean;
  defCharset: string;
  defParamCharset: string;
  limits: { fileSize: number; files: number; fields: number; fieldSize: number; parts: number };
}) => Writable & {
  on(event: 'file', cb: (field: string, stream: Readable & { truncated?: boolean }, info: { filename?: string; mimeType: string }) => void): unknown;
  on(event: 'field', cb: (field: string, value: string, info: { valueTruncated: boolean; mimeType: string }) => void): unknown;
  on(event: 'filesLimit' | 'partsLimit' | 'fieldsLimit' | 'close', cb: () => void): unknown;
  on(event: 'error', cb: (e: Error) => void): unknown;
};

/** A file part as received, before checks. */
interface ReceivedPart {
  originalName: string;
  declaredType: string;
  bytes: Buffer;
}

/**
 * Reads the `files` parts into memory within the limits. Unlike multer, which drops a part
 * whose file name is empty or only a path ("..", "dir/") and so would store a reply without
 * it, every part is kept with the name as sent; reply-files.ts gives it a safe name. A body
 * that is not a readable multipart form is a 400 with a message.
 */
function receiveFiles(): RequestHandler {
  return (req, _res, next) => {
    // One slot per part in the order sent; a file's bytes fill its slot when it ends.
    const files: (ReceivedPart | null)[] = [];
    if (!req.is('multipart/form-data')) {
      replyParts(req).replyFiles = [];
      return next();
    }
    let parser: ReturnType<typeof busboy>;
    try {
      parser = busboy({
        headers: req.headers,
        preservePath: true,
        // busboy takes a part with an empty file name (filename="") for a plain field: read
        // as latin1, its value gives back its exact bytes, so it is kept as a nameless file.
        defCharset: 'latin1',
        defParamCharset: 'utf8',
        limits: { fileSize: REPLY_MAX_FILE_BYTES, files: REPLY_MAX_FILES, fields: 5, fieldSize: REPLY_MAX_FILE_BYTES, parts: REPLY_MAX_FILES + 5 },
      });
    } catch (e) {
      return next(
        new HttpError(
          400,
          `The upload is not a readable multipart form (${e instanceof Error ? e.message : 'no boundary'}). Please choose the files again and send them.`,
        ),
      );
    }
    let failed = false;
    let total = 0;
    const fail = (err: HttpError) => {
      if (failed) return;
      failed = true;
      req.unpipe(parser);
      req.resume(); // read the rest away so the answer reaches the sender
      next(err);
    };
    parser.on('file', (field, stream, info) => {
      if (field !== 'files') {
        stream.resume();
        return fail(new HttpError(422, 'Send the files in the "files" field.'));
      }
      const chunks: Buffer[] = [];
      const slot = files.push(null) - 1;
      stream.on('data', (c: Buffer) => {
        chunks.push(c);
        total += c.length;
        if (total > REPLY_MAX_TOTAL_BYTES) fail(tooMuch());
      });
      stream.on('limit', () => fail(fileTooBig()));
      stream.on('error', () => undefined); // the parser reports the same error once, below
      stream.on('end', () => (files[slot] = { originalName: info.filename ?? '', declaredType: info.mimeType, bytes: Buffer.concat(chunks) }));
    });
    parser.on('field', (field, value, info) => {
      if (field === 'complete') return void (replyParts(req).replyComplete = value === 'true');
      // An empty "files" value is a file input left empty (what a browser sends): no file.
      if (field !== 'files' || value === '') return;
      if (info.valueTruncated) return fail(fileTooBig());
      total += value.length;
      if (files.length >= REPLY_MAX_FILES) return fail(tooManyFiles());
      files.push({ originalName: '', declaredType: info.mimeType, bytes: Buffer.from(value, 'latin1') });
    });
    parser.on('filesLimit', () => fail(tooManyFiles()));
    parser.on('partsLimit', () => fail(tooManyFiles()));
    parser.on('fieldsLimit', () => fail(new HttpError(422, 'The upload has too many fields. Please choose the files again and send them.')));
    parser.on('error', (e) =>
      fail(new HttpError(400, `The upload is not a readable multipart form (${e.message}). Please choose the files again and send them.`)),
    );
    parser.on('close', () => {
      if (failed) return;
      replyParts(req).replyFiles = files.filter((f): f is ReceivedPart => f !== null);
      next();
    });
    req.pipe(parser);
  };
}

/** Where the received parts wait for the handler. */
function replyParts(req: Request): { replyFiles?: ReceivedPart[]; replyComplete?: boolean } {
  return req as unknown as { replyFiles?: ReceivedPart[]; replyComplete?: boolean };
}

/** A reply link acts for the taxpayer, whoever's browser opens it: no staff actor. */
function taxpayerAudit(req: Request): AuditContext {
  return { actor: null, route: auditOf(req).route };
}

/** The public reply routes. */
export function replyRoutes(deps: LetterDeps) {
  const r = secureRouter();
  const ds = deps.dataSource;

  r.get('/replies/:token', publicAccess, async (req, res) => {
    res.setHeader('Cache-Control', 'no-store');
    res.json(await getReplyRequest(ds, taxpayerAudit(req), String(req.params.token)));
  });

  r.post(
    '/replies/:token',
    publicAccess,
    totalLimit,
    async (req, _res, next) => {
      await openRequest(ds, String(req.params.token));
      next();
    },
    receiveFiles(),
    async (req, res) => {
      const files = replyParts(req).replyFiles ?? [];
      res.setHeader('Cache-Control', 'no-store');
      res.status(201).json(await receiveReply(deps, taxpayerAudit(req), String(req.params.token), files, replyParts(req).replyComplete === true));
    },
  );

  return r;
}
