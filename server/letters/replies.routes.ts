/**
 * The taxpayer's reply link (no account; publicAccess; the token is the key):
 *  - `GET /api/replies/:token` → {state: 'open', taxpayerName, items, dueDate, office,
 *    limits}; 404 unknown link; 410 {error, state: 'answered' | 'expired'};
 *  - `POST /api/replies/:token` multipart, files in the `files` field (PDF, JPEG or PNG;
 *    REPLY_MAX_FILES files of at most REPLY_MAX_FILE_BYTES, REPLY_MAX_TOTAL_BYTES together)
 *    → 201 {received, receivedAt}; then the link is used up.
 *
 * The link is checked before the body is read, so an unknown or used link costs no upload;
 * files are held in memory (bounded by the limits) and stored in the database with the case.
 */
import type { RequestHandler } from 'express';
import multer from 'multer';
import { REPLY_MAX_FILE_BYTES, REPLY_MAX_FILES, REPLY_MAX_TOTAL_BYTES } from '../../shared/letters';
import type { AppDeps } from '../app-deps';
import { publicAccess, secureRouter } from '../auth/access';
import { HttpError } from '../http/errors';
import { getReplyRequest, openRequest, receiveReply } from './replies.service';

const MB = 1024 * 1024;

/** Refuses a body over the total limit by its declared length, before reading it. */
const totalLimit: RequestHandler = (req, _res, next) => {
  const declared = Number(req.get('content-length') ?? 0);
  // Multipart framing adds a little per part; allow 64 KB for it.
  if (declared > REPLY_MAX_TOTAL_BYTES + 64 * 1024) return next(new HttpError(413, `The files together are larger than ${REPLY_MAX_TOTAL_BYTES / MB} MB. Send fewer or smaller files.`));
  next();
};

/** Reads the `files` parts into memory within the limits, turning multer's errors into plain answers. */
function receiveFiles(): RequestHandler {
  const mw = multer({
    storage: multer.memoryStorage(),
    limits: { fileSize: REPLY_MAX_FILE_BYTES, files: REPLY_MAX_FILES, fields: 5, fieldSize: 10_000, parts: REPLY_MAX_FILES + 5 },
    defParamCharset: 'utf8',
  }).array('files', REPLY_MAX_FILES);
  return (req, res, next) => {
    mw(req, res, (err: unknown) => {
      if (!err) return next();
      if (err instanceof multer.MulterError) {
        if (err.code === 'LIMIT_FILE_SIZE') return next(new HttpError(413, `A file is larger than ${REPLY_MAX_FILE_BYTES / MB} MB. Scan it at a lower resolution or split it, then send again.`));
        if (err.code === 'LIMIT_FILE_COUNT' || (err.code === 'LIMIT_UNEXPECTED_FILE' && err.field === 'files')) return next(new HttpError(422, `Send at most ${REPLY_MAX_FILES} files in one reply.`));
        if (err.code === 'LIMIT_UNEXPECTED_FILE') return next(new HttpError(422, 'Send the files in the "files" field.'));
        return next(new HttpError(422, 'The upload could not be read. Please choose the files again and send them.'));
      }
      next(err);
    });
  };
}

/** The public reply routes. */
export function replyRoutes(deps: AppDeps) {
  const r = secureRouter();
  const ds = deps.dataSource;

  r.get('/replies/:token', publicAccess, async (req, res) => {
    res.setHeader('Cache-Control', 'no-store');
    res.json(await getReplyRequest(ds, String(req.params.token)));
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
      const files = ((req.files as Express.Multer.File[] | undefined) ?? []).map((f) => ({ originalName: f.originalname, declaredType: f.mimetype, bytes: f.buffer }));
      res.setHeader('Cache-Control', 'no-store');
      res.status(201).json(await receiveReply(ds, String(req.params.token), files));
    },
  );

  return r;
}
