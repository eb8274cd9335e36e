import { AssignRequestSchema, NoteRequestSchema, ReopenRequestSchema, TransitionRequestSchema } from '../../shared/cases';
import { BulkReassignSchema, CaseListQuerySchema, type CaseListQuery } from '../../shared/case-api';
import type { AppDeps } from '../app-deps';
import { staffAuditOf } from '../access-log/audit-context';
import { allow, secureRouter } from '../auth/access';
import { validate } from '../http/validate';
import type { LetterDeps } from '../letters/letters.service';
import { addNote, assign, bulkReassign, claim, reopen, revealTin, transition } from './case-actions.service';
import { getCaseDetail, listExaminers } from './case-detail.service';
import { exportCases, listCases } from './case-queue.service';
import { today as officeToday } from '../clock';

/**
 * Case work (issue 7). Examiners read every case and act on their
 * own (the services check that per case); supervisors act on every case, assign and export.
 * Fixed paths (`/cases/export.xlsx`, `/cases/reassign`) come before `/cases/:id`.
 */
export function caseRoutes(deps: Pick<AppDeps, 'dataSource'> & { letters: LetterDeps }) {
  const r = secureRouter();
  const ds = deps.dataSource;

  r.get('/cases', allow('readCases'), validate(CaseListQuerySchema, 'query'), async (req, res) => {
    // Taxpayer data: never kept in a browser or proxy cache.
    res.setHeader('Cache-Control', 'no-store');
    res.json(await listCases(ds, staffAuditOf(req), res.locals.query as CaseListQuery));
  });

  r.get('/cases/export.xlsx', allow('exportQueue'), validate(CaseListQuerySchema, 'query'), async (req, res) => {
    const stamp = officeToday();
    res.setHeader('Content-Type', 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet');
    res.setHeader('Content-Disposition', `attachment; filename="plumbline-queue-${stamp}.xlsx"`);
    res.setHeader('Cache-Control', 'no-store');
    try {
      await exportCases(ds, staffAuditOf(req), res.locals.query as CaseListQuery, res);
    } catch (e) {
      // Once the workbook has started to stream, no JSON error can follow: cut the download
      // short (the browser reports it as failed) and keep the cause in the server log.
      if (!res.headersSent) throw e;
      console.error('[server] GET /api/cases/export.xlsx failed while streaming:', e);
      res.destroy(e instanceof Error ? e : undefined);
    }
  });

  r.post('/cases/reassign', allow('assignCases'), validate(BulkReassignSchema), async (req, res) => {
    res.json(await bulkReassign(ds, staffAuditOf(req), req.body));
  });

  r.get('/examiners', allow('readCases'), async (_req, res) => {
    res.json({ items: await listExaminers(ds) });
  });

  r.get('/cases/:id', allow('readCases'), async (req, res) => {
    res.setHeader('Cache-Control', 'no-store');
    res.json(await getCaseDetail(ds, staffAuditOf(req), String(req.params.id)));
  });

  r.post('/cases/:id/claim', allow('workCases'), async (req, res) => {
    res.json(await claim(ds, staffAuditOf(req), String(req.params.id)));
  });

  r.post('/cases/:id/assign', allow('assignCases'), validate(AssignRequestSchema), async (req, res) => {
    res.json(await assign(ds, staffAuditOf(req), String(req.params.id), req.body.assigneeId));
  });

  r.post('/cases/:id/transition', allow('workCases'), validate(TransitionRequestSchema), async (req, res) => {
    res.json(await transition(ds, staffAuditOf(req), String(req.params.id), req.body, deps.letters));
  });

  r.post('/cases/:id/reopen', allow('reopenCases'), validate(ReopenRequestSchema), async (req, res) => {
    res.json(await reopen(ds, staffAuditOf(req), String(req.params.id), req.body.reason));
  });

  r.post('/cases/:id/notes', allow('workCases'), validate(NoteRequestSchema), async (req, res) => {
    res.status(201).json(await addNote(ds, staffAuditOf(req), String(req.params.id), req.body.text));
  });

  r.post('/cases/:id/reveal-tin', allow('readCases'), async (req, res) => {
    res.setHeader('Cache-Control', 'no-store');
    res.json(await revealTin(ds, staffAuditOf(req), String(req.params.id)));
  });

  return r;
}
