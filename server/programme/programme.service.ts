/**
 * The Programme (issue 17, docs/methods.md#programme-outcomes): the random review sample a
 * scoring run draws in its finishing step, the outcome figures of finished cases, and a
 * batch's random cases for supervisors.
 */
import { randomBytes } from 'node:crypto';
import type { DataSource, EntityManager } from 'typeorm';
import { computeOutcomes, type OutcomeCase } from '../../shared/programme/outcomes';
import { ProgrammeSettingsSchema, stratifiedSample } from '../../shared/programme/sample';
import type { Controls, Outcomes, OutcomesQuery } from '../../shared/programme/api';
import { incomeBand } from '../../shared/scoring/factors';
import type { CaseState } from '../../shared/cases';
import { recordAccess } from '../access-log/access-log.service';
import type { StaffAudit } from '../access-log/audit-context';
import { openRandomCases } from '../cases/case-open.repository';
import { profileSettings } from '../scoring/scoring-profile.repository';
import { countOpenRandom, finishedCases, findRun, randomCasesOf, sampleCandidates, saveRunSample } from './programme.repository';

/**
 * Draws the run's random review sample and opens a 'random' case for each return drawn, once
 * per run: a run that already holds its sample draws nothing again. Called by the scoring run's
 * finishing step inside its transaction, after every return is scored.
 * @param seed fixed by tests; otherwise a fresh random seed, stored with the run
 * @returns how many cases were opened
 */
export async function drawRandomSample(m: EntityManager, batchId: string, version: number, seed?: string): Promise<number> {
  const run = await findRun(m, batchId, version);
  if (!run || run.randomSample) return 0;
  const settings = ProgrammeSettingsSchema.parse({ randomShare: (await profileSettings(m, version))?.randomShare ?? undefined });
  const candidates = await sampleCandidates(m, batchId, version);
  const sample = stratifiedSample(
    candidates.map((c) => ({ id: c.returnId, activityCode: c.activityCode, incomeBand: incomeBand(Math.max(0, Number(c.incomeCents))) })),
    // An unguessable seed: nobody can tell in advance which returns a run will draw.
    { share: settings.randomShare, seed: seed ?? randomBytes(16).toString('hex'), batchSize: run.total },
  );
  const byId = new Map(candidates.map((c) => [c.returnId, c]));
  const opened = await openRandomCases(
    m,
    batchId,
    version,
    sample.ids.map((id) => ({ returnId: id, taxpayerId: byId.get(id)!.taxpayerId, scoreId: byId.get(id)!.scoreId })),
  );
  const { ids: _ids, ...record } = sample;
  await saveRunSample(m, run.id, { ...record, drawn: sample.ids.length });
  return opened.length;
}

/** The outcome figures for cases finished in the period (and the open random cases). */
export async function getOutcomes(ds: DataSource, q: OutcomesQuery): Promise<Outcomes> {
  const [rows, openRandom] = await Promise.all([finishedCases(ds, q), countOpenRandom(ds, q.batch)]);
  const cases: OutcomeCase[] = rows.map((r) => ({
    id: r.id,
    selection: r.selection,
    state: r.state as CaseState,
    adjustedCents: r.adjustedCents === null ? null : Number(r.adjustedCents),
    closedAt: r.closedAt ? r.closedAt.toISOString() : null,
    assigneeId: r.assigneeId,
    assigneeName: r.assigneeName,
    batchId: r.batchId,
    batchLabel: r.batchLabel,
    decile: r.decile ?? 1,
    factors: r.factors ?? [],
  }));
  return computeOutcomes(cases, openRandom);
}

/** A batch's random review cases; each one shown is a view of a case, so it is logged. */
export async function listControls(ds: DataSource, audit: StaffAudit, batchId: string): Promise<Controls> {
  const rows = await randomCasesOf(ds, batchId);
  if (rows.length) {
    await recordAccess(
      ds,
      audit,
      rows.map((r) => ({ action: 'view' as const, recordType: 'case' as const, recordId: r.caseId, taxpayerId: r.taxpayerId, detail: 'random review list' })),
    );
  }
  return { items: rows.map((r) => ({ caseId: r.caseId, returnRef: r.returnRef })) };
}
