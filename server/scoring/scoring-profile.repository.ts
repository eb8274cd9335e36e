/**
 * Queries on scoring profiles (versioned weights; a version is never edited) and the
 * closed-case counts factor performance is measured on. The one home of "which version is
 * active": scoring runs and the profile screen both ask here.
 */
import type { EntityManager } from 'typeorm';
import { FINAL_STATES } from '../../shared/cases';
import type { Db } from '../db/db';

/** The profile version's settings (JSON as stored). */
export async function profileSettings(db: Db, version: number): Promise<Record<string, unknown> | null> {
  const r = await db.query(`SELECT settings FROM scoring_profile WHERE version = $1`, [version]);
  return r[0]?.settings ?? null;
}

/** A profile version as stored, with its author's name. */
export interface ProfileRecord {
  version: number;
  note: string;
  active: boolean;
  createdAt: Date;
  /** The stored JSON, parsed by the caller with ScoringSettingsSchema. */
  settings: unknown;
  authorName: string | null;
}

/** Every version, newest first. */
export async function findProfiles(db: Db): Promise<ProfileRecord[]> {
  const rows: { version: number; note: string; active: boolean; created_at: Date; settings: unknown; author: string | null }[] = await db.query(
    `SELECT p.version, p.note, p.active, p.created_at, p.settings, u.display_name AS author FROM scoring_profile p LEFT JOIN app_user u ON u.id = p.author_id ORDER BY p.version DESC`,
  );
  return rows.map((r) => ({
    version: Number(r.version),
    note: String(r.note),
    active: Boolean(r.active),
    createdAt: r.created_at,
    settings: r.settings,
    authorName: r.author ?? null,
  }));
}

/** The active version and its settings (the scoring migration creates version 1, active). */
export async function findActiveProfile(db: Db): Promise<{ version: number; settings: unknown }> {
  const r: { version: number; settings: unknown }[] = await db.query(`SELECT version, settings FROM scoring_profile WHERE active`);
  if (!r.length) throw new Error('No active scoring profile: the scoring migration creates version 1.');
  return { version: Number(r[0].version), settings: r[0].settings };
}

/** The active version's number. */
export async function activeProfileVersion(db: Db): Promise<number> {
  return (await findActiveProfile(db)).version;
}

/** True when the version exists. */
export async function profileExists(db: Db, version: number): Promise<boolean> {
  return (await db.query(`SELECT 1 FROM scoring_profile WHERE version = $1`, [version])).length > 0;
}

/**
 * Locks the profile table against other writers for the rest of the transaction, so two
 * supervisors saving at once get versions 5 and 6, not 5 twice, and two activations run one
 * after the other.
 */
export async function lockProfiles(m: EntityManager): Promise<void> {
  await m.query(`LOCK TABLE scoring_profile IN SHARE ROW EXCLUSIVE MODE`);
}

/** The next version number (call under {@link lockProfiles}). */
export async function nextProfileVersion(m: EntityManager): Promise<number> {
  const [{ next }] = await m.query(`SELECT coalesce(max(version), 0) + 1 AS next FROM scoring_profile`);
  return Number(next);
}

/** Stores a new version; when it is to be active, the previously active one stops being so. */
export async function insertProfile(
  m: EntityManager,
  p: { version: number; settings: unknown; note: string; authorId: string; active: boolean },
): Promise<void> {
  if (p.active) await m.query(`UPDATE scoring_profile SET active = false WHERE active`);
  await m.query(`INSERT INTO scoring_profile (version, settings, note, author_id, active) VALUES ($1, $2::jsonb, $3, $4, $5)`, [
    p.version,
    JSON.stringify(p.settings),
    p.note,
    p.authorId,
    p.active,
  ]);
}

/** Makes one version the only active one. */
export async function setActiveProfile(m: EntityManager, version: number): Promise<void> {
  await m.query(`UPDATE scoring_profile SET active = false WHERE active AND version <> $1`, [version]);
  await m.query(`UPDATE scoring_profile SET active = true WHERE version = $1`, [version]);
}

/** The state of a batch, or null when there is none. */
export async function batchState(db: Db, batchId: string): Promise<string | null> {
  const b: { state: string }[] = await db.query(`SELECT state FROM filing_batch WHERE id = $1`, [batchId]);
  return b.length ? b[0].state : null;
}

/** True when the batch already has a run under the version. */
export async function runExists(db: Db, batchId: string, version: number): Promise<boolean> {
  return (await db.query(`SELECT 1 FROM scoring_run WHERE batch_id = $1 AND profile_version = $2`, [batchId, version])).length > 0;
}

/** Finished cases, and how many of them ended adjusted. */
export async function finishedCaseCounts(db: Db): Promise<{ closed: number; adjusted: number }> {
  const [r] = await db.query(
    `SELECT count(*)::int AS closed, count(*) FILTER (WHERE state = 'closed_adjusted')::int AS adjusted
       FROM exam_case WHERE state = ANY($1::text[])`,
    [FINAL_STATES],
  );
  return { closed: r.closed, adjusted: r.adjusted };
}

/**
 * Per score component: of the finished cases it added points to (under the score that
 * opened or last updated the case), how many, and how many ended adjusted.
 */
export async function flaggedFinishedCases(db: Db): Promise<{ key: string; flagged: number; adjusted: number }[]> {
  return db.query(
    `SELECT comp->>'key' AS key, count(*)::int AS flagged, count(*) FILTER (WHERE c.state = 'closed_adjusted')::int AS adjusted
       FROM exam_case c JOIN return_score s ON s.id = c.score_id AND s.tax_year = c.tax_year,
            jsonb_array_elements(s.breakdown->'components') AS comp
      WHERE c.state = ANY($1::text[]) AND (comp->>'points')::numeric > 0
      GROUP BY 1`,
    [FINAL_STATES],
  );
}
