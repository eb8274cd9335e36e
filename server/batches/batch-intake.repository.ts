/**
 * The batch record through the intake: recorded as validating (the file hash decides
 * duplicates), taken over when a stopped server left it half-way, rejected with its report,
 * removed, and recovered at start-up. Storing an accepted batch's rows is
 * batch-store.repository.ts.
 */
import type { DataSource, EntityManager } from 'typeorm';
import type { BatchIssue, BatchState } from '../../shared/returns/batch-rows';
import { returnedRows } from '../db/returned-rows';

/**
 * Records a new batch in state `validating`, unless a batch with the same hash exists.
 * @returns the new id, or null when the hash is already on file (the unique index decides,
 *   so two uploads of one file at the same moment cannot both pass)
 */
export async function insertBatchRecord(
  ds: DataSource,
  rec: { fileHash: string; format: 'xlsx' | 'csv'; fileNames: string[]; loadedBy: string | null; label: string | null; at: Date },
): Promise<string | null> {
  const rows: { id: string }[] = await ds.query(
    `INSERT INTO filing_batch (file_hash, format, file_names, state, loaded_by, label, progress_at)
     VALUES ($1, $2, $3, 'validating', $4, $5, $6)
     ON CONFLICT (file_hash) DO NOTHING
     RETURNING id`,
    [rec.fileHash, rec.format, rec.fileNames, rec.loadedBy, rec.label, rec.at],
  );
  return rows[0]?.id ?? null;
}

/** The batch that has this hash, if any. */
export async function findBatchByHash(ds: DataSource, fileHash: string): Promise<{ id: string; state: BatchState; createdAt: Date } | null> {
  const rows = await ds.query(`SELECT id, state, created_at AS "createdAt" FROM filing_batch WHERE file_hash = $1`, [fileHash]);
  return rows[0] ?? null;
}

/**
 * Takes over a batch left in `received`/`validating` by a server that stopped mid-way (its
 * transaction was rolled back, so nothing of it is stored). Without this, its hash would
 * answer every new upload of the file with 409 forever.
 * @returns true when the record was taken over for a new attempt
 */
export async function takeOverStaleBatch(
  ds: DataSource,
  id: string,
  take: { loadedBy: string | null; label: string | null; at: Date; stalledAfterSeconds: number },
): Promise<boolean> {
  const rows = returnedRows<{ id: string }>(
    await ds.query(
      `UPDATE filing_batch SET state = 'validating', loaded_by = $2, label = $3, rows_checked = 0, progress_at = $4,
          updated_at = now(), created_at = now()
     WHERE id = $1 AND state IN ('received', 'validating')
       AND COALESCE(progress_at, updated_at) < $4::timestamptz - make_interval(secs => $5)
     RETURNING id`,
      [id, take.loadedBy, take.label, take.at, take.stalledAfterSeconds],
    ),
  );
  return rows.length > 0;
}

/** The rows read so far, and when (office clock): the batch screen's sign of life. */
export async function reportProgress(ds: DataSource, id: string, rowsChecked: number, at: Date): Promise<void> {
  await ds.query(`UPDATE filing_batch SET rows_checked = $2, progress_at = $3 WHERE id = $1 AND state IN ('received', 'validating')`, [id, rowsChecked, at]);
}

/** Marks a batch rejected with its report. */
export async function markRejected(ds: DataSource, id: string, errors: BatchIssue[], errorCount: number): Promise<void> {
  // Only a batch still being checked: one ended as stalled meanwhile keeps its own reason.
  await ds.query(
    `UPDATE filing_batch SET state = 'rejected', errors = $2::jsonb, error_count = $3, updated_at = now() WHERE id = $1 AND state IN ('received', 'validating')`,
    [id, JSON.stringify(errors), errorCount],
  );
}

/** Removes the record of an attempt that failed for a server reason, so the file can be sent again. */
export async function deleteBatchRecord(ds: DataSource, id: string): Promise<void> {
  await ds.query(`DELETE FROM filing_batch WHERE id = $1 AND state IN ('received', 'validating')`, [id]);
}

/**
 * Ends every batch left in `received`/`validating` by a server that stopped mid-intake, in
 * one transaction: whatever rows carry its id are removed (the intake stores in one
 * transaction, so normally there are none), and it is marked rejected with `reason` as its
 * only issue. Its file hash is replaced by a marker that no SHA-256 can equal, so the same
 * file may be sent again at once instead of meeting the duplicate check. Call only when no
 * intake can be running (at server start-up: one server per office).
 * @returns the batches recovered
 */
export async function recoverInterruptedBatches(ds: DataSource, reason: BatchIssue): Promise<{ id: string; fileNames: string[] }[]> {
  return ds.transaction(async (m) => {
    const stuck: { id: string }[] = await m.query(`SELECT id FROM filing_batch WHERE state IN ('received', 'validating') ORDER BY id FOR UPDATE`);
    return endBatches(
      m,
      stuck.map((r) => r.id),
      reason,
    );
  });
}

/** Removes whatever rows carry these batches' ids and marks them rejected with `reason`, their file freed. */
async function endBatches(m: EntityManager, ids: string[], reason: BatchIssue): Promise<{ id: string; fileNames: string[] }[]> {
  if (!ids.length) return [];
  await m.query(`DELETE FROM third_party_statement WHERE batch_id = ANY($1::uuid[])`, [ids]);
  // Deleting returns removes their line items too (trigger tax_return_delete_lines).
  await m.query(`DELETE FROM tax_return WHERE batch_id = ANY($1::uuid[])`, [ids]);
  return returnedRows<{ id: string; fileNames: string[] }>(
    await m.query(
      `UPDATE filing_batch
          SET state = 'rejected', file_hash = '${ENDED_HASH_PREFIX}' || replace(id::text, '-', ''),
              errors = jsonb_build_array($2::jsonb), error_count = 1, notices = '[]',
              return_count = 0, line_item_count = 0, statement_count = 0, amended_count = 0, updated_at = now()
        WHERE id = ANY($1::uuid[])
        RETURNING id, file_names AS "fileNames"`,
      [ids, JSON.stringify(reason)],
    ),
  );
}

/** The file-hash marker of a batch ended unfinished (no SHA-256 in hex can start so). */
const ENDED_HASH_PREFIX = 'interrupted:';

/**
 * Ends one batch whose check has stalled (no progress since `stalledBefore`, office clock),
 * as {@link recoverInterruptedBatches} does at start-up, under a row lock so two clicks end it
 * once. Idempotent: a batch already ended this way is reported as `already`.
 * @returns what was found: `ended` now, `already` ended so before, `moving` (progress since
 *   `stalledBefore`, or finished), or null when there is no such batch
 */
export async function endStalledBatch(ds: DataSource, id: string, stalledBefore: Date, reason: BatchIssue): Promise<'ended' | 'already' | 'moving' | null> {
  return ds.transaction(async (m) => {
    const rows: { state: BatchState; fileHash: string; progressAt: Date | null; updatedAt: Date }[] = await m.query(
      `SELECT state, file_hash AS "fileHash", progress_at AS "progressAt", updated_at AS "updatedAt" FROM filing_batch WHERE id = $1 FOR UPDATE`,
      [id],
    );
    const b = rows[0];
    if (!b) return null;
    if (b.state === 'rejected' && b.fileHash.startsWith(ENDED_HASH_PREFIX)) return 'already';
    if (b.state !== 'received' && b.state !== 'validating') return 'moving';
    if (new Date(b.progressAt ?? b.updatedAt) >= stalledBefore) return 'moving';
    await endBatches(m, [id], reason);
    return 'ended';
  });
}
