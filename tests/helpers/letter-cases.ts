/**
 * Cases ready for letters: a scored batch's open cases, claimed by an examiner and moved to
 * in review through the real case workflow, with a recipient address unique to the test.
 */
import { randomBytes } from 'node:crypto';
import type { DataSource } from 'typeorm';
import { addDays, isoToday } from '../../shared/letters';
import type { SessionUser } from '../../server/auth/access';
import { claimCase, moveCase } from '../../server/cases/case-workflow';
import type { SignedIn } from './auth';

/** The session user behind a signed-in test client. */
export function sessionUserOf(c: Pick<SignedIn, 'user'>): SessionUser {
  return { id: c.user.id, username: c.user.username, displayName: `Test ${c.user.role}`, role: c.user.role };
}

/** An address nobody else in the shared MailDev uses. */
export function uniqueAddress(label = 'taxpayer'): string {
  return `${label}-${randomBytes(5).toString('hex')}@example.org`;
}

/** A due date `days` from today (default 30), inside the allowed window. */
export function dueIn(days = 30): string {
  return addDays(isoToday(), days);
}

/**
 * Takes the next open case, has `examiner` claim it and move it to in review, and gives its
 * taxpayer `email` (null for none) as the address on file.
 */
export async function caseInReview(
  ds: DataSource,
  examiner: Pick<SignedIn, 'user'>,
  email: string | null = uniqueAddress(),
): Promise<{ caseId: string; taxpayerId: string; email: string | null }> {
  const rows = await ds.query(`SELECT id, taxpayer_id FROM exam_case WHERE state = 'open' ORDER BY priority DESC, id LIMIT 1`);
  if (!rows.length) throw new Error('no open case left in the fixture batch: load a bigger one');
  const { id, taxpayer_id } = rows[0];
  const actor = sessionUserOf(examiner);
  // The routes the API would log for these moves.
  await claimCase(ds, { actor, route: `POST /api/cases/${id}/claim` }, id);
  await ds.transaction((m) => moveCase(m, { actor, route: `POST /api/cases/${id}/transition` }, id, 'in_review'));
  await ds.query(`UPDATE taxpayer SET email = $2 WHERE id = $1`, [taxpayer_id, email]);
  return { caseId: id, taxpayerId: taxpayer_id, email };
}
