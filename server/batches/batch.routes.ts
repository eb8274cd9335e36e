/**
 * Batches API (docs/design.md#api-contract):
 *  - `POST /api/batches` (clerk), multipart: `file` (one XLSX workbook) or `returns` +
 *    `line_items` (+ `statements`) CSV parts → 201 {id, state, counts, amendedReturns},
 *    422 {error, batchId, errorCount, errors: [{file, row, column, message, value}]},
 *    409 {error, batchId} for a file seen before, 413 for a file over the size limit;
 *  - `GET /api/batches?page=&pageSize=` and `GET /api/batches/:id` (clerk, supervisor);
 *  - `GET /api/batches/:id/report.xlsx` (clerk, supervisor): the batch's report (any state);
 *  - `POST /api/batches/:id/retry` (clerk): ends a batch whose check has stalled, so its file
 *    can be uploaded again (idempotent).
 * The upload may carry a text field `label` (what people call the batch; blank: the default).
 */
import type { RequestHandler } from 'express';
import multer from 'multer';
import { checkBatchLabel, BatchListQuerySchema, sizeText, type BatchRejected, type BatchTable } from '../../shared/returns/batch-rows';
import { recordAccess } from '../access-log/access-log.service';
import { staffAuditOf } from '../access-log/audit-context';
import type { AppDeps } from '../app-deps';
import { allow, secureRouter } from '../auth/access';
import { HttpError } from '../http/errors';
import { validate } from '../http/validate';
import { endStalledIntake, getBatch, ingestUpload, listBatches, uploadFromParts, writeBatchReport, type IntakeDeps } from './batch.service';
import type { UploadedFile } from './intake/sources';
import { removeSpooled, spoolStorage } from './intake/upload-spool';
import { isUuid } from '../../shared/ids';

const PARTS = ['file', 'returns', 'line_items', 'statements'] as const;
type Part = (typeof PARTS)[number];

/** Limits from the configuration. */
export function intakeLimits(config: AppDeps['config']) {
  return { maxFileBytes: Math.round(config.BATCH_MAX_FILE_MB * 1024 * 1024), maxRows: config.BATCH_MAX_ROWS };
}

/**
 * Receives the multipart upload onto disk (never whole into memory) in the upload spool
 * (files 0600 in the project's data folder), with the size limit, and turns multer's own
 * errors into the batch error format; a body that is not a readable multipart form is 400.
 */
function receiveUpload(maxFileBytes: number): RequestHandler {
  const mw = multer({
    storage: spoolStorage(),
    limits: { fileSize: maxFileBytes, files: PARTS.length, fields: 10, parts: 20 },
    defParamCharset: 'utf8',
  }).fields(PARTS.map((name) => ({ name, maxCount: 1 })));
  return (req, res, next) => {
    const problem = (status: number, message: string, file = '') => {
      const body: BatchRejected = { error: message, batchId: null, errorCount: 1, errors: [{ file, row: null, column: null, message }] };
      res.status(status).json(body);
    };
    mw(req, res, (err: unknown) => {
      if (!err) return next();
      if (err instanceof multer.MulterError) {
        const file = (err as { filename?: string }).filename ?? err.field ?? '';
        if (err.code === 'LIMIT_FILE_SIZE')
          return problem(413, `The file is larger than the ${sizeText(maxFileBytes)} a batch file may be. Split the batch into smaller batches.`, file);
        if (err.code === 'LIMIT_UNEXPECTED_FILE') {
          return problem(
            422,
            `Unexpected upload part "${err.field}". Send one XLSX workbook as "file", or CSV files as "returns", "line_items" and optionally "statements".`,
            file,
          );
        }
        return problem(422, `The upload could not be read (${err.message}). Send one XLSX workbook, or the CSV files of one batch.`, file);
      }
      // busboy's errors: the body is not a well-formed multipart form (cut short, bad boundary…).
      if (err instanceof Error)
        return problem(
          400,
          `The upload is not a readable multipart form (${err.message}). Choose the files again and send them; if it happens again, the connection may have been cut.`,
        );
      next(err);
    });
  };
}

function removeUploads(files: Record<string, Express.Multer.File[]> | undefined): Promise<void> {
  return removeSpooled(Object.values(files ?? {}).flat());
}

/** The batch routes. */
export function batchRoutes(deps: Pick<AppDeps, 'config' | 'dataSource' | 'boss'>) {
  const r = secureRouter();
  const limits = intakeLimits(deps.config);
  const intake: IntakeDeps = { dataSource: deps.dataSource, boss: deps.boss, limits };

  r.post('/batches', allow('uploadBatches'), receiveUpload(limits.maxFileBytes), async (req, res) => {
    const files = req.files as Record<string, Express.Multer.File[]> | undefined;
    try {
      const parts: Partial<Record<Part, UploadedFile>> = {};
      for (const p of PARTS) {
        const f = files?.[p]?.[0];
        if (f) parts[p] = { originalName: f.originalname || `${p}${p === 'file' ? '.xlsx' : '.csv'}`, path: f.path, size: f.size };
      }
      const labelIn = checkBatchLabel(typeof req.body?.label === 'string' ? req.body.label : '');
      if ('problem' in labelIn) {
        const message = labelIn.problem;
        const body: BatchRejected = { error: message, batchId: null, errorCount: 1, errors: [{ file: '', row: null, column: 'label', message }] };
        res.status(422).json(body);
        return;
      }
      const made = uploadFromParts(parts as Partial<Record<'file' | BatchTable, UploadedFile>>);
      if ('issues' in made) {
        const body: BatchRejected = { error: made.issues[0].message, batchId: null, errorCount: made.issues.length, errors: made.issues };
        res.status(422).json(body);
        return;
      }
      const outcome = await ingestUpload(intake, made.upload, req.user!, labelIn.label || null);
      const batchId = outcome.kind === 'accepted' ? outcome.batch.id : outcome.body.batchId;
      if (outcome.kind !== 'duplicate' && batchId) {
        await recordAccess(deps.dataSource, staffAuditOf(req), {
          action: 'change',
          recordType: 'filing_batch',
          recordId: batchId,
          detail:
            outcome.kind === 'accepted'
              ? `batch accepted: ${outcome.batch.counts.returns} returns, ${outcome.batch.counts.lineItems} line items, ${outcome.batch.counts.statements} statements`
              : `batch rejected: ${outcome.body.errorCount} errors`,
        });
      }
      if (outcome.kind === 'accepted') res.status(201).json(outcome.batch);
      else if (outcome.kind === 'duplicate') res.status(409).json(outcome.body);
      else res.status(422).json(outcome.body);
    } finally {
      await removeUploads(files);
    }
  });

  r.get('/batches', allow('readBatches'), validate(BatchListQuerySchema, 'query'), async (_req, res) => {
    res.json(await listBatches(deps.dataSource, res.locals.query));
  });

  r.get('/batches/:id', allow('readBatches'), async (req, res) => {
    const id = String(req.params.id);
    const batch = isUuid(id) ? await getBatch(deps.dataSource, id) : null;
    if (!batch) throw new HttpError(404, `There is no batch ${id}.`);
    // A rejection report lists values from the file (TIN-like ones masked): its read is logged
    // like any read of taxpayer data. Batches without errors are not: the screen polls them.
    if (batch.errors.length)
      await recordAccess(deps.dataSource, staffAuditOf(req), { action: 'view', recordType: 'filing_batch', recordId: id, detail: 'rejection report' });
    res.json(batch);
  });

  r.post('/batches/:id/retry', allow('uploadBatches'), async (req, res) => {
    const id = String(req.params.id);
    if (!isUuid(id)) throw new HttpError(404, `There is no batch ${id}.`);
    const { batch, ended } = await endStalledIntake(deps.dataSource, id);
    if (ended)
      await recordAccess(deps.dataSource, staffAuditOf(req), { action: 'change', recordType: 'filing_batch', recordId: id, detail: 'stalled check ended' });
    res.json(batch);
  });

  r.get('/batches/:id/report.xlsx', allow('readBatches'), async (req, res) => {
    const id = String(req.params.id);
    const batch = isUuid(id) ? await getBatch(deps.dataSource, id) : null;
    if (!batch) throw new HttpError(404, `There is no batch ${id}.`);
    await recordAccess(deps.dataSource, staffAuditOf(req), { action: 'export', recordType: 'filing_batch', recordId: id, detail: 'validation report' });
    res.setHeader('Content-Type', 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet');
    res.setHeader('Content-Disposition', `attachment; filename="batch-${id.slice(0, 8)}-report.xlsx"`);
    res.setHeader('Cache-Control', 'no-store');
    await writeBatchReport(deps.dataSource, id, res);
  });

  return r;
}
