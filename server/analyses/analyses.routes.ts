import fs from 'node:fs';
import os from 'node:os';
import multer from 'multer';
import { DigitAnalysisRequestSchema } from '../../shared/analyses';
import type { AppDeps } from '../app-deps';
import { allow, secureRouter } from '../auth/access';
import { HttpError } from '../http/errors';
import { validate } from '../http/validate';
import { analyseAmounts, analyseFile } from './analyses.service';

/** Largest file for an ad-hoc digit analysis. */
const MAX_FILE_BYTES = 50 * 1024 * 1024;

/** `POST /api/analyses/digits`: JSON {amounts} or multipart `file` (+ optional `column`). */
export function analysesRoutes(_deps: AppDeps) {
  const r = secureRouter();
  const upload = multer({ dest: os.tmpdir(), limits: { fileSize: MAX_FILE_BYTES, files: 1, fields: 5 } }).single('file');
  r.post('/analyses/digits', allow('analyse'), (req, res, next) => {
    if (!req.is('multipart/form-data')) return next();
    upload(req, res, (err: unknown) => {
      if (err instanceof multer.MulterError) {
        return next(new HttpError(err.code === 'LIMIT_FILE_SIZE' ? 413 : 422, err.code === 'LIMIT_FILE_SIZE' ? `The file is larger than ${MAX_FILE_BYTES / 1024 / 1024} MB.` : `Upload problem: ${err.message}. Send one file in the field "file".`));
      }
      if (err) return next(err);
      const file = req.file;
      if (!file) return next(new HttpError(422, 'No file: send the amounts as the multipart field "file".'));
      const column = typeof req.body?.column === 'string' && req.body.column.trim() ? req.body.column.trim() : null;
      analyseFile(file.path, file.originalname, column)
        .then((profile) => res.json(profile))
        .catch(next)
        .finally(() => fs.rm(file.path, { force: true }, () => undefined));
    });
  }, validate(DigitAnalysisRequestSchema), (req, res) => {
    res.json(analyseAmounts(req.body.amounts));
  });
  return r;
}
