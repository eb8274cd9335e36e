/**
 * Scoring profiles: list, add a version, activate, re-score a batch, and learn from closed
 * cases. Versions are never edited, so old scores always name the weights they were made
 * with.
 *
 * Suggested weights come from the Programme's outcome model, fitted without the selection's
 * bias (server/programme/programme.service.ts learnWeights); a suggestion for a person to
 * accept or not: nothing changes until a supervisor saves a new version.
 */
import type PgBoss from 'pg-boss';
import type { DataSource } from 'typeorm';
import type { NewProfileInput, Performance, ProfileVersion } from '../../shared/scoring/profile-api';
import { COMPONENT_LABELS, COMPONENTS, ScoringSettingsSchema } from '../../shared/scoring/settings';
import { recordAccess } from '../access-log/access-log.service';
import type { StaffAudit } from '../access-log/audit-context';
import { HttpError } from '../http/errors';
import { QUEUES } from '../queue/queues';
import { isUuid } from '../../shared/ids';
import { learnWeights } from '../programme/programme.service';
import {
  activeProfileVersion,
  batchState,
  findActiveProfile,
  findProfiles,
  finishedCaseCounts,
  flaggedFinishedCases,
  insertProfile,
  lockProfiles,
  nextProfileVersion,
  profileExists,
  runExists,
  setActiveProfile,
} from './scoring-profile.repository';

export async function listProfiles(ds: DataSource): Promise<ProfileVersion[]> {
  return (await findProfiles(ds)).map((p) => ({
    version: p.version,
    note: p.note,
    active: p.active,
    authorName: p.authorName,
    createdAt: p.createdAt.toISOString(),
    settings: ScoringSettingsSchema.parse(p.settings),
  }));
}

/** Adds a version (and makes it the active one unless told not to). */
export async function addProfile(ds: DataSource, audit: StaffAudit, input: NewProfileInput): Promise<ProfileVersion> {
  const version = await ds.transaction(async (m) => {
    await lockProfiles(m);
    const next = await nextProfileVersion(m);
    await insertProfile(m, { version: next, settings: input.settings, note: input.note, authorId: audit.actor.id, active: input.activate });
    await recordAccess(m, audit, { action: 'change', recordType: 'scoring_profile', recordId: String(next), detail: input.note });
    return next;
  });
  return (await listProfiles(ds)).find((p) => p.version === version)!;
}

/** Makes an existing version the one new batches are scored with. */
export async function activateProfile(ds: DataSource, audit: StaffAudit, version: number): Promise<void> {
  await ds.transaction(async (m) => {
    // Same lock as addProfile: two activations at once run one after the other, never a 500.
    await lockProfiles(m);
    if (!(await profileExists(m, version))) throw new HttpError(404, `There is no scoring profile version ${version}.`);
    await setActiveProfile(m, version);
    await recordAccess(m, audit, { action: 'change', recordType: 'scoring_profile', recordId: String(version), detail: 'activated' });
  });
}

/** Queues a re-score of a scored batch under a version (the active one by default); old scores stay. */
export async function rescoreBatch(ds: DataSource, boss: PgBoss | null, audit: StaffAudit, batchId: string, version?: number): Promise<{ version: number }> {
  if (!boss) throw new HttpError(503, 'The job queue is not running; start the worker and try again.');
  if (!isUuid(batchId)) throw new HttpError(404, 'No such batch.');
  const state = await batchState(ds, batchId);
  if (state === null) throw new HttpError(404, 'No such batch.');
  if (state !== 'scored') throw new HttpError(409, `Only a scored batch can be re-scored; this one is ${state}.`);
  const v = version ?? (await activeProfileVersion(ds));
  if (await runExists(ds, batchId, v)) throw new HttpError(409, `This batch has already been scored under version ${v}.`);
  if (!(await profileExists(ds, v))) throw new HttpError(404, `There is no scoring profile version ${v}.`);
  await boss.send(QUEUES.scoreBatch, { batchId, profileVersion: v });
  await recordAccess(ds, audit, { action: 'change', recordType: 'filing_batch', recordId: batchId, detail: `re-score under version ${v}` });
  return { version: v };
}

/**
 * How each factor did on closed cases: of the closed cases it added points to (under the
 * score that opened or last updated the case), how many ended adjusted; and the weights the
 * outcome model suggests.
 */
export async function factorPerformance(ds: DataSource): Promise<Performance> {
  const active = await findActiveProfile(ds);
  const settings = ScoringSettingsSchema.parse(active.settings);
  const [{ closed, adjusted }, rows, learned] = await Promise.all([finishedCaseCounts(ds), flaggedFinishedCases(ds), learnWeights(ds, settings.weights)]);
  const byKey = new Map(rows.map((r) => [r.key, r]));
  return {
    version: active.version,
    closedCases: closed,
    adjustedCases: adjusted,
    baseRate: closed > 0 ? adjusted / closed : null,
    factors: COMPONENTS.map((key) => {
      const r = byKey.get(key);
      const flagged = r?.flagged ?? 0;
      const adj = r?.adjusted ?? 0;
      return { key, label: COMPONENT_LABELS[key], flagged, adjusted: adj, adjustedRate: flagged > 0 ? adj / flagged : null, weight: settings.weights[key] };
    }),
    learned,
  };
}
