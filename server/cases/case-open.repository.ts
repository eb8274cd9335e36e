/**
 * Opening cases from scores: the one place a case is created. Scoring (server/scoring)
 * calls {@link openCasesForScores} inside its chunk transaction; the rule for which cases a
 * newer score may update (never a finished one) lives here with the other case rules.
 */
import type { EntityManager } from 'typeorm';
import { FINAL_STATES } from '../../shared/cases';
import { refreshDeadlines } from './case-deadline.repository';

/** A newly selected return's score, as a case is opened (or updated) from it. */
export interface SelectedScore {
  returnId: string;
  taxpayerId: string;
  scoreId: string;
  riskScore: number;
  /** Amount at stake in integer cents. */
  stakeCents: number;
  priority: number;
}

/**
 * Opens a case for each selected return and records an 'opened' case event; a return that
 * already has a case (scored before under another version) keeps its case, which takes the
 * newer score's figures and gets a 'rescored' event, unless the case is finished: a
 * finished case keeps the score it was decided on (factor performance reads it).
 * Runs in the caller's transaction.
 */
export async function openCasesForScores(m: EntityManager, batchId: string, version: number, selected: SelectedScore[]): Promise<void> {
  if (!selected.length) return;
  const rows: { id: string; inserted: boolean }[] = await m.query(
    // The score's tax year goes with its id: together they are its key (docs/design.md#partitions-by-tax-year).
    `INSERT INTO exam_case (return_id, taxpayer_id, batch_id, score_id, tax_year, risk_score, amount_at_stake, priority)
     SELECT u.return_id, u.taxpayer_id, $1, u.score_id, s.tax_year, u.risk_score, u.stake / 100.0, u.priority
       FROM unnest($2::uuid[], $3::uuid[], $4::bigint[], $5::numeric[], $6::bigint[], $7::numeric[])
            AS u(return_id, taxpayer_id, score_id, risk_score, stake, priority)
       JOIN return_score s ON s.id = u.score_id
     ON CONFLICT (return_id) DO UPDATE
       SET score_id = EXCLUDED.score_id, tax_year = EXCLUDED.tax_year, risk_score = EXCLUDED.risk_score,
           amount_at_stake = EXCLUDED.amount_at_stake, priority = EXCLUDED.priority, updated_at = now()
       WHERE exam_case.state <> ALL($8::text[])
     RETURNING id, (xmax = 0) AS inserted`,
    [
      batchId,
      selected.map((o) => o.returnId),
      selected.map((o) => o.taxpayerId),
      selected.map((o) => o.scoreId),
      selected.map((o) => o.riskScore),
      selected.map((o) => o.stakeCents),
      selected.map((o) => o.priority),
      FINAL_STATES,
    ],
  );
  // Each case keeps its assessment deadline (issue 13), so the queue can sort on it.
  await refreshDeadlines(
    m,
    rows.map((r) => r.id),
  );
  const opened = rows.filter((r) => r.inserted).map((r) => r.id);
  const rescored = rows.filter((r) => !r.inserted).map((r) => r.id);
  if (opened.length) {
    await m.query(
      `INSERT INTO case_event (case_id, kind, to_state, detail) SELECT id, 'opened', 'open', jsonb_build_object('profileVersion', $2::int) FROM unnest($1::uuid[]) AS id`,
      [opened, version],
    );
  }
  if (rescored.length) {
    await m.query(
      `INSERT INTO case_event (case_id, kind, detail) SELECT id, 'rescored', jsonb_build_object('profileVersion', $2::int) FROM unnest($1::uuid[]) AS id`,
      [rescored, version],
    );
  }
}

/** A return drawn for random review, as its case is opened. */
export interface RandomPick {
  returnId: string;
  taxpayerId: string;
  scoreId: string;
}

/**
 * Opens a case marked `selection = 'random'` for each return drawn by the run's random review
 * sample (docs/methods.md#programme-outcomes), with its score's figures and an 'opened' event.
 * A return that already has a case keeps it unchanged (ON CONFLICT DO NOTHING), so a retried
 * finishing step opens nothing twice. Runs in the caller's transaction.
 * @returns the new cases' ids
 */
export async function openRandomCases(m: EntityManager, batchId: string, version: number, picks: RandomPick[]): Promise<string[]> {
  if (!picks.length) return [];
  const rows: { id: string }[] = await m.query(
    `INSERT INTO exam_case (return_id, taxpayer_id, batch_id, score_id, tax_year, risk_score, amount_at_stake, priority, selection)
     SELECT u.return_id, u.taxpayer_id, $1, s.id, s.tax_year, s.risk_score, s.amount_at_stake, s.priority, 'random'
       FROM unnest($2::uuid[], $3::uuid[], $4::bigint[]) AS u(return_id, taxpayer_id, score_id)
       JOIN return_score s ON s.id = u.score_id
     ON CONFLICT (return_id) DO NOTHING
     RETURNING id`,
    [batchId, picks.map((p) => p.returnId), picks.map((p) => p.taxpayerId), picks.map((p) => p.scoreId)],
  );
  const ids = rows.map((r) => r.id);
  // Like every case, a random one keeps its assessment deadline (issue 13).
  await refreshDeadlines(m, ids);
  if (ids.length) {
    await m.query(
      `INSERT INTO case_event (case_id, kind, to_state, detail) SELECT id, 'opened', 'open', jsonb_build_object('profileVersion', $2::int, 'selection', 'random') FROM unnest($1::uuid[]) AS id`,
      [ids, version],
    );
  }
  return ids;
}
