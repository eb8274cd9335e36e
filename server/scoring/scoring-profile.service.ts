/**
 * Scoring profiles: list, add a version, activate, re-score a batch, and learn from closed
 * cases. Versions are never edited, so old scores always name the weights they were made
 * with.
 *
 * Suggested re-weighting (product rule, no published source): a factor's weight is scaled by
 * how much more (or less) often the closed cases it flagged ended adjusted than closed cases
 * overall, w' = w × (rate_factor / rate_all), kept within ½× … 2× and 0 … 100, and left as it
 * is until the factor has flagged at least {@link MIN_EVIDENCE} closed cases. A suggestion
 * for a person to accept or not; nothing changes by itself.
 */
import type PgBoss from 'pg-boss';
import type { DataSource } from 'typeorm';
import type { NewProfileInput, Performance, ProfileVersion } from '../../shared/scoring/profile-api';
import { COMPONENT_LABELS, COMPONENTS, ScoringSettingsSchema } from '../../shared/scoring/settings';
import { recordAccess } from '../access-log/access-log.service';
import type { SessionUser } from '../auth/access';
import { HttpError } from '../http/errors';
import { QUEUES } from '../queue/queues';
import { isUuid } from '../../shared/ids';

/** Fewest flagged closed cases before a weight is suggested to move. */
export const MIN_EVIDENCE = 10;

export async function listProfiles(ds: DataSource): Promise<ProfileVersion[]> {
  const rows = await ds.query(
    `SELECT p.version, p.note, p.active, p.created_at, p.settings, u.display_name AS author FROM scoring_profile p LEFT JOIN app_user u ON u.id = p.author_id ORDER BY p.version DESC`,
  );
  return rows.map((r: Record<string, unknown>) => ({
    version: Number(r.version),
    note: String(r.note),
    active: Boolean(r.active),
    authorName: (r.author as string | null) ?? null,
    createdAt: (r.created_at as Date).toISOString(),
    settings: ScoringSettingsSchema.parse(r.settings),
  }));
}

/** Adds a version (and makes it the active one unless told not to). */
export async function addProfile(ds: DataSource, actor: SessionUser, input: NewProfileInput): Promise<ProfileVersion> {
  const version = await ds.transaction(async (m) => {
    // Serialise version numbers: two supervisors saving at once get 5 and 6, not 5 twice.
    await m.query(`LOCK TABLE scoring_profile IN SHARE ROW EXCLUSIVE MODE`);
    const [{ next }] = await m.query(`SELECT coalesce(max(version), 0) + 1 AS next FROM scoring_profile`);
    if (input.activate) await m.query(`UPDATE scoring_profile SET active = false WHERE active`);
    await m.query(`INSERT INTO scoring_profile (version, settings, note, author_id, active) VALUES ($1, $2::jsonb, $3, $4, $5)`, [next, JSON.stringify(input.settings), input.note, actor.id, input.activate]);
    await recordAccess(m, actor, { action: 'change', route: 'POST /api/scoring/profiles', recordType: 'scoring_profile', recordId: String(next), detail: input.note });
    return Number(next);
  });
  return (await listProfiles(ds)).find((p) => p.version === version)!;
}

/** Makes an existing version the one new batches are scored with. */
export async function activateProfile(ds: DataSource, actor: SessionUser, version: number): Promise<void> {
  await ds.transaction(async (m) => {
    // Same lock as addProfile: two activations at once run one after the other, never a 500.
    await m.query(`LOCK TABLE scoring_profile IN SHARE ROW EXCLUSIVE MODE`);
    const found = await m.query(`SELECT 1 FROM scoring_profile WHERE version = $1`, [version]);
    if (!found.length) throw new HttpError(404, `There is no scoring profile version ${version}.`);
    await m.query(`UPDATE scoring_profile SET active = false WHERE active AND version <> $1`, [version]);
    await m.query(`UPDATE scoring_profile SET active = true WHERE version = $1`, [version]);
    await recordAccess(m, actor, { action: 'change', route: `POST /api/scoring/profiles/${version}/activate`, recordType: 'scoring_profile', recordId: String(version), detail: 'activated' });
  });
}

/** Queues a re-score of a scored batch under a version (the active one by default); old scores stay. */
export async function rescoreBatch(ds: DataSource, boss: PgBoss | null, actor: SessionUser, batchId: string, version?: number): Promise<{ version: number }> {
  if (!boss) throw new HttpError(503, 'The job queue is not running; start the worker and try again.');
  if (!isUuid(batchId)) throw new HttpError(404, 'No such batch.');
  const b = await ds.query(`SELECT state FROM filing_batch WHERE id = $1`, [batchId]);
  if (!b.length) throw new HttpError(404, 'No such batch.');
  if (b[0].state !== 'scored') throw new HttpError(409, `Only a scored batch can be re-scored; this one is ${b[0].state}.`);
  const v = version ?? Number((await ds.query(`SELECT version FROM scoring_profile WHERE active`))[0].version);
  const exists = await ds.query(`SELECT 1 FROM scoring_run WHERE batch_id = $1 AND profile_version = $2`, [batchId, v]);
  if (exists.length) throw new HttpError(409, `This batch has already been scored under version ${v}.`);
  const known = await ds.query(`SELECT 1 FROM scoring_profile WHERE version = $1`, [v]);
  if (!known.length) throw new HttpError(404, `There is no scoring profile version ${v}.`);
  await boss.send(QUEUES.scoreBatch, { batchId, profileVersion: v });
  await recordAccess(ds, actor, { action: 'change', route: `POST /api/batches/${batchId}/rescore`, recordType: 'batch', recordId: batchId, detail: `re-score under version ${v}` });
  return { version: v };
}

/**
 * How each factor did on closed cases: of the closed cases it added points to (under the
 * score that opened or last updated the case), how many ended adjusted.
 */
export async function factorPerformance(ds: DataSource): Promise<Performance> {
  const active = await ds.query(`SELECT version, settings FROM scoring_profile WHERE active`);
  const settings = ScoringSettingsSchema.parse(active[0].settings);
  const [{ closed, adjusted }] = await ds.query(
    `SELECT count(*)::int AS closed, count(*) FILTER (WHERE state = 'closed_adjusted')::int AS adjusted
       FROM exam_case WHERE state IN ('closed_no_change', 'closed_adjusted', 'referred')`,
  );
  const rows: { key: string; flagged: number; adjusted: number }[] = await ds.query(
    `SELECT comp->>'key' AS key, count(*)::int AS flagged, count(*) FILTER (WHERE c.state = 'closed_adjusted')::int AS adjusted
       FROM exam_case c JOIN return_score s ON s.id = c.score_id,
            jsonb_array_elements(s.breakdown->'components') AS comp
      WHERE c.state IN ('closed_no_change', 'closed_adjusted', 'referred') AND (comp->>'points')::numeric > 0
      GROUP BY 1`,
  );
  const byKey = new Map(rows.map((r) => [r.key, r]));
  const baseRate = closed > 0 ? adjusted / closed : null;
  return {
    version: Number(active[0].version),
    closedCases: closed,
    adjustedCases: adjusted,
    baseRate,
    minEvidence: MIN_EVIDENCE,
    factors: COMPONENTS.map((key) => {
      const r = byKey.get(key);
      const flagged = r?.flagged ?? 0;
      const adj = r?.adjusted ?? 0;
      const rate = flagged > 0 ? adj / flagged : null;
      const weight = settings.weights[key];
      let suggested = weight;
      if (rate !== null && baseRate && flagged >= MIN_EVIDENCE) {
        const factor = Math.min(2, Math.max(0.5, rate / baseRate));
        suggested = Math.round(Math.min(100, weight * factor) * 10) / 10;
      }
      return { key, label: COMPONENT_LABELS[key], flagged, adjusted: adj, adjustedRate: rate, weight, suggestedWeight: suggested };
    }),
  };
}
