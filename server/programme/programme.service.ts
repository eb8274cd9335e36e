/**
 * The Programme (issue 17, docs/methods.md#programme-outcomes): the random review sample a
 * scoring run draws in its finishing step, the outcome figures of finished cases, and a
 * batch's random cases for supervisors.
 */
import { randomBytes } from 'node:crypto';
import type { DataSource, EntityManager } from 'typeorm';
import { computeOutcomes, type OutcomeCase } from '../../shared/programme/outcomes';
import { stratifiedSample } from '../../shared/programme/sample';
import type { Controls, Outcomes, OutcomesQuery, Preview, PreviewRequest, WeightFitDto } from '../../shared/programme/api';
import { chooseSelection, compareSelections, rescore, type StoredComponent } from '../../shared/programme/selection';
import { fitOutcomeModel, suggestWeights, type FitCase } from '../../shared/programme/weights';
import { incomeBand } from '../../shared/scoring/factors';
import { COMPONENT_LABELS, COMPONENTS, ScoringSettingsSchema, type ComponentKey, type ScoringSettings } from '../../shared/scoring/settings';
import type { CaseState } from '../../shared/cases';
import { recordAccess } from '../access-log/access-log.service';
import type { StaffAudit } from '../access-log/audit-context';
import { openCasesForScores, openRandomCases } from '../cases/case-open.repository';
import { HttpError } from '../http/errors';
import { isUuid } from '../../shared/ids';
import { batchState, profileSettings } from '../scoring/scoring-profile.repository';
import { findRun } from '../scoring/scoring.repository';
import {
  closedCasesForFit,
  countOpenRandom,
  finishedCases,
  latestFinishedRun,
  markSelected,
  writeCutOnCases,
  positiveScores,
  randomCasesOf,
  sampleCandidates,
  saveRunSample,
  storedScores,
} from './programme.repository';

/**
 * The scoring run's selection step, once every return is scored (called by the run's finishing
 * step inside its transaction): under a capacity the top returns are selected now (the cut needs
 * every score), then the random review sample is drawn from the rest.
 */
export async function finishSelection(m: EntityManager, batchId: string, version: number, seed?: string): Promise<void> {
  const stored = await profileSettings(m, version);
  const settings = ScoringSettingsSchema.parse(stored);
  const cut = settings.capacity ? await selectByCapacity(m, batchId, version, settings) : null;
  await drawRandomSample(m, batchId, version, seed, settings.randomShare);
  // A random case's screen says at which score cases opened: under a capacity, the cut that filled it.
  if (cut !== null) await writeCutOnCases(m, batchId, version, cut);
}

/** Opens cases for the batch's top returns under the profile's capacity (shared/programme/selection.ts). */
async function selectByCapacity(m: EntityManager, batchId: string, version: number, settings: ScoringSettings): Promise<number | null> {
  const rows = await positiveScores(m, batchId, version);
  const { ids, cut } = chooseSelection(rows, settings);
  if (!ids.length || cut === null) return null;
  const chosen = new Set(ids);
  const picked = rows.filter((r) => chosen.has(r.returnId));
  await markSelected(
    m,
    picked.map((r) => r.scoreId),
  );
  await openCasesForScores(m, batchId, version, picked);
  return cut;
}

/**
 * Draws the run's random review sample and opens a 'random' case for each return drawn, once
 * per run: a run that already holds its sample draws nothing again. Part of {@link finishSelection}.
 * @param seed fixed by tests; otherwise a fresh random seed, stored with the run
 * @returns how many cases were opened
 */
export async function drawRandomSample(m: EntityManager, batchId: string, version: number, seed: string | undefined, share: number): Promise<number> {
  const run = await findRun(m, batchId, version);
  if (!run || run.randomSample) return 0;
  const candidates = await sampleCandidates(m, batchId, version);
  const sample = stratifiedSample(
    candidates.map((c) => ({ id: c.returnId, activityCode: c.activityCode, incomeBand: incomeBand(Math.max(0, Number(c.incomeCents))) })),
    // An unguessable seed: nobody can tell in advance which returns a run will draw.
    { share, seed: seed ?? randomBytes(16).toString('hex'), batchSize: run.total },
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

/** Fewest closed cases (and adjusted ones among them) before weights are fitted or a yield expected. */
export const MIN_CLOSED_FOR_FIT = 30;

/** The closed cases as the outcome model takes them: strengths in COMPONENTS order, weight 1 or 1 / sampling rate. */
async function fitCases(ds: DataSource): Promise<(FitCase & { random: boolean })[]> {
  const rows = await closedCasesForFit(ds);
  return rows.map((r) => {
    const by = new Map(r.components.map((c) => [c.key, c.strength]));
    return {
      id: r.id,
      strengths: COMPONENTS.map((k) => by.get(k) ?? 0),
      adjusted: r.adjusted,
      adjustedCents: r.adjustedCents === null ? 0 : Number(r.adjustedCents),
      // A random case stands for 1 / rate returns below the cut; a rate missing or 0 (never for a drawn case) counts it once.
      weight: r.selection === 'random' && r.rate && r.rate > 0 ? 1 / r.rate : 1,
      random: r.selection === 'random',
    };
  });
}

const enough = (cases: readonly FitCase[]) =>
  cases.length >= MIN_CLOSED_FOR_FIT && cases.filter((c) => c.adjusted).length >= 5 && cases.some((c) => !c.adjusted);

/**
 * Weights learned from closed cases without the selection's bias (docs/methods.md#programme-outcomes):
 * the weighted logistic fit, each weight with its interval, and the back-test on held-back cases.
 */
export async function learnWeights(ds: DataSource, current: Record<ComponentKey, number>): Promise<WeightFitDto> {
  const cases = await fitCases(ds);
  const base = { closed: cases.length, randomClosed: cases.filter((c) => c.random).length, minClosed: MIN_CLOSED_FOR_FIT };
  if (!enough(cases)) return { ...base, fit: null };
  const fit = suggestWeights(
    COMPONENTS,
    COMPONENTS.map((k) => current[k]),
    cases,
  );
  return { ...base, fit: { ...fit, suggestions: fit.suggestions.map((s) => ({ ...s, label: COMPONENT_LABELS[s.key as ComponentKey] })) } };
}

/**
 * What a profile would select in a scored batch, against today's selection (the batch's latest
 * run), and the yield to expect from the outcomes so far. Reads the run's stored components;
 * saves nothing.
 */
export async function previewSelection(ds: DataSource, req: PreviewRequest): Promise<Preview> {
  if (!isUuid(req.batchId) || (await batchState(ds, req.batchId)) === null) throw new HttpError(404, 'No such batch.');
  const run = await latestFinishedRun(ds, req.batchId);
  if (!run) throw new HttpError(409, 'This batch has no finished scoring yet: choose a scored batch for the preview.');
  const runSettings = ScoringSettingsSchema.parse(await profileSettings(ds, run.version));
  const rows = await storedScores(ds, req.batchId, run.version);
  const weights = req.settings.weights;
  const sameWeights = COMPONENTS.every((k) => runSettings.weights[k] === weights[k]);
  const scored = rows.map((r) => ({
    returnId: r.returnId,
    ...(sameWeights ? { riskScore: r.riskScore, priority: r.priority } : rescore(r.components as StoredComponent[], weights, r.stakeCents)),
    components: r.components,
  }));
  const { ids, cut } = chooseSelection(scored, req.settings);
  const change = compareSelections(new Set(rows.filter((r) => r.selected).map((r) => r.returnId)), ids);
  const exact = JSON.stringify(runSettings.params) === JSON.stringify(req.settings.params);
  const note = exact
    ? sameWeights
      ? 'The scores as stored; only the cut or capacity differs.'
      : 'Scores recomputed from the stored strengths with the new weights (strengths kept to 3 decimals: a score within a few hundredths of the cut may fall the other way).'
    : `The factor parameters differ from version ${run.version}'s: the preview uses the strengths as version ${run.version} found them. Re-score the batch to see the new parameters at work.`;
  // Expected yield: the outcome model (all closed cases, random ones weighted) applied to the selection.
  const cases = await fitCases(ds);
  let expected: Preview['expected'] = null;
  if (enough(cases)) {
    const model = fitOutcomeModel(cases);
    const chosen = new Set(ids);
    const adjustedCases = cases.filter((c) => c.adjusted);
    const meanCents = adjustedCases.reduce((t, c) => t + c.weight * c.adjustedCents, 0) / adjustedCases.reduce((t, c) => t + c.weight, 0);
    let adjusted = 0;
    for (const r of scored) {
      if (!chosen.has(r.returnId)) continue;
      const by = new Map(r.components.map((c) => [c.key, c.strength]));
      adjusted += model.predict(COMPONENTS.map((k) => by.get(k) ?? 0));
    }
    expected = {
      adjusted: Math.round(adjusted * 10) / 10,
      rate: ids.length ? Math.round((adjusted / ids.length) * 1000) / 1000 : 0,
      amountCents: Math.round(adjusted * meanCents),
      closedCases: cases.length,
      method:
        'chance of an adjustment from the weighted logistic fit on every closed case (random ones weighted 1 / sampling rate), times the weighted mean adjusted amount',
    };
  }
  return { batchId: req.batchId, version: run.version, scored: rows.length, ...change, cut, exact, note, expected };
}
