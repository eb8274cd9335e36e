import type { DataSource } from 'typeorm';
import { ReconciliationRequestSchema, SaveAnalysisRequestSchema } from '../../shared/analyses';
import { staffAuditOf } from '../access-log/audit-context';
import { allow, secureRouter } from '../auth/access';
import { validate } from '../http/validate';
import { caseAnalysisPaper, listCaseAnalyses, reconcileLedger, saveCaseAnalysis } from './case-analyses.service';

/**
 * Working papers kept with a case (issue 15):
 * `POST /api/cases/:id/analyses` runs and saves a digit analysis of a reply file's column or
 * of a pool of the returns on file; `GET /api/cases/:id/analyses` lists them;
 * `GET /api/cases/:id/analyses/:analysisId/pdf` and `…/xlsx` are the working paper as PDF and
 * as a workbook. Saved analyses are never changed. `POST /api/cases/:id/reconciliation`
 * sets a received ledger's totals per category (mapped to line codes) beside the return.
 */
export function caseAnalysesRoutes({ dataSource: ds }: { dataSource: DataSource }) {
  const r = secureRouter();
  r.post('/cases/:id/analyses', allow('analyse'), validate(SaveAnalysisRequestSchema), async (req, res) => {
    res.status(201).json(await saveCaseAnalysis(ds, staffAuditOf(req), String(req.params.id), req.body));
  });
  r.get('/cases/:id/analyses', allow('readCases'), async (req, res) => {
    res.setHeader('Cache-Control', 'no-store');
    res.json({ analyses: await listCaseAnalyses(ds, staffAuditOf(req), String(req.params.id)) });
  });
  for (const [format, type] of [
    ['pdf', 'application/pdf'],
    ['xlsx', 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet'],
  ] as const) {
    r.get(`/cases/:id/analyses/:analysisId/${format}`, allow('readCases'), async (req, res) => {
      const { fileName, bytes } = await caseAnalysisPaper(ds, staffAuditOf(req), String(req.params.id), String(req.params.analysisId), format);
      res.setHeader('Cache-Control', 'no-store');
      res.setHeader('Content-Type', type);
      res.setHeader('Content-Disposition', `attachment; filename="${fileName}"`);
      res.send(bytes);
    });
  }
  r.post('/cases/:id/reconciliation', allow('analyse'), validate(ReconciliationRequestSchema), async (req, res) => {
    res.setHeader('Cache-Control', 'no-store');
    res.json(await reconcileLedger(ds, staffAuditOf(req), String(req.params.id), req.body));
  });
  return r;
}
