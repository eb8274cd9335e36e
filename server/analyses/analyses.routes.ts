import multer from 'multer';
import { DigitAnalysisRequestSchema, PoolAnalysisRequestSchema } from '../../shared/analyses';
import { staffAuditOf } from '../access-log/audit-context';
import type { AppDeps } from '../app-deps';
import { allow, secureRouter } from '../auth/access';
import { removeSpooled, spoolStorage } from '../batches/intake/upload-spool';
import { HttpError } from '../http/errors';
import { validate } from '../http/validate';
import { analyseAmounts, analyseFile } from './analyses.service';
import { analysePool, listPoolChoices } from './pool.service';

/** Largest file for an ad-hoc digit analysis. */
const MAX_FILE_BYTES = 50 * 1024 * 1024;

/**
 * `POST /api/analyses/digits`: JSON {amounts} or multipart `file` (+ optional `column`, and
 * `by`: a column to split by, which adds `split` to the answer).
 * The file waits in the upload spool (server/batches/intake/upload-spool.ts) and is read in
 * a worker thread under reading caps; it is removed when the answer is sent. The analysis
 * stores nothing.
 *
 * `POST /api/analyses/digits/pool` {pool}: the same analysis of a pool of the returns on file
 * (server/analyses/pool.service.ts), logged as a read; `GET /api/analyses/pools` lists what
 * the pool pickers offer (preparers, batches, tax years).
 */
export function analysesRoutes({ dataSource: ds }: Pick<AppDeps, 'dataSource'>) {
  const r = secureRouter();
  r.post('/analyses/digits/pool', allow('analyse'), validate(PoolAnalysisRequestSchema), async (req, res) => {
    res.setHeader('Cache-Control', 'no-store');
    res.json(await analysePool(ds, staffAuditOf(req), req.body.pool));
  });
  r.get('/analyses/pools', allow('analyse'), async (_req, res) => {
    res.setHeader('Cache-Control', 'no-store');
    res.json(await listPoolChoices(ds));
  });
  const upload = multer({ storage: spoolStorage(), limits: { fileSize: MAX_FILE_BYTES, files: 1, fields: 5 } }).single('file');
  r.post(
    '/analyses/digits',
    allow('analyse'),
    (req, res, next) => {
      if (!req.is('multipart/form-data')) return next();
      upload(req, res, (err: unknown) => {
        if (err instanceof multer.MulterError) {
          return next(
            new HttpError(
              err.code === 'LIMIT_FILE_SIZE' ? 413 : 422,
              err.code === 'LIMIT_FILE_SIZE'
                ? `The file is larger than ${MAX_FILE_BYTES / 1024 / 1024} MB. Split the amounts into several smaller files and analyse each on its own.`
                : `Upload problem: ${err.message}. Send one file in the field "file".`,
            ),
          );
        }
        // busboy's errors: the body is not a well-formed multipart form (cut short, bad boundary…).
        if (err instanceof Error)
          return next(new HttpError(400, `The upload is not a readable multipart form (${err.message}). Choose the file again and send it.`));
        if (err) return next(err);
        const file = req.file;
        if (!file) return next(new HttpError(422, 'No file: send the amounts as the multipart field "file".'));
        const column = typeof req.body?.column === 'string' && req.body.column.trim() ? req.body.column.trim() : null;
        const by = typeof req.body?.by === 'string' && req.body.by.trim() ? req.body.by.trim() : null;
        analyseFile(file.path, file.originalname, column, by)
          .then((profile) => res.json(profile))
          .catch(next)
          .finally(() => void removeSpooled([file]));
      });
    },
    validate(DigitAnalysisRequestSchema),
    (req, res) => {
      res.json(analyseAmounts(req.body.amounts));
    },
  );
  return r;
}
