/**
 * A batch a crash left `validating` (issue 12): recovered at server start-up, marked
 * rejected with the reason, its rows gone, and the same file accepted again at once
 * (before the fix it met 409 "being checked right now" for 30 minutes).
 */
import { recoverInterruptedIntake } from '../../server/batches/batch.service';
import { signedInContext } from '../helpers/auth';
import { countIntakeRows, csvBatch, upload } from '../helpers/batches';
import { startServer } from '../helpers/processes';

jest.setTimeout(120_000);

describe('recovery of a batch interrupted mid-intake', () => {
  const env = signedInContext('clerk');

  /** Puts a stored batch back to `validating`, as a server killed in the middle of it would leave one. */
  async function interrupt(id: string) {
    await env.ctx.dataSource.query(`UPDATE filing_batch SET state = 'validating' WHERE id = $1`, [id]);
  }

  it('marks it rejected with the reason, removes its rows, and takes the same file again at once', async () => {
    const b = await csvBatch({ seed: 'recover-1', returns: 6 });
    const parts = { returns: b.files.returns!, line_items: b.files.line_items!, statements: b.files.statements };
    const before = await countIntakeRows(env.ctx.dataSource);
    const first = await upload(env.user, parts);
    expect(first.status).toBe(201);
    await interrupt(first.body.id);

    // The fault the probe found: the same file is refused while the record says "validating".
    const refused = await upload(env.user, parts);
    expect(refused.status).toBe(409);

    const recovered = await recoverInterruptedIntake(env.ctx.dataSource, new Date('2026-03-02T09:30:00Z'));
    expect(recovered).toEqual([{ id: first.body.id, fileNames: expect.any(Array) }]);
    const [row] = await env.ctx.dataSource.query(
      `SELECT state, error_count AS "errorCount", errors, return_count AS "returnCount" FROM filing_batch WHERE id = $1`,
      [first.body.id],
    );
    expect(row).toEqual({
      state: 'rejected',
      errorCount: 1,
      returnCount: 0,
      errors: [{ file: '', row: null, column: null, message: expect.stringContaining('The server stopped while this batch was being checked') }],
    });
    expect(row.errors[0].message).toMatch(/2026-03-02 09:30 UTC\)\. Nothing of it was stored\. Upload the same file again\./);
    const rows = await countIntakeRows(env.ctx.dataSource);
    // Taxpayers and preparers are shared records, not the batch's rows.
    expect({ returns: rows.returns, lineItems: rows.lineItems, statements: rows.statements }).toEqual({
      returns: before.returns,
      lineItems: before.lineItems,
      statements: before.statements,
    });
    // The report says why, through the API as well.
    const detail = await env.user.agent.get(`/api/batches/${first.body.id}`);
    expect(detail.body.state).toBe('rejected');

    const again = await upload(env.user, parts);
    expect(again.status).toBe(201);
    expect(again.body.id).not.toBe(first.body.id);
    expect((await countIntakeRows(env.ctx.dataSource)).returns).toBe(6);
    // Nothing else is touched: a second recovery finds nothing.
    expect(await recoverInterruptedIntake(env.ctx.dataSource)).toEqual([]);
  });

  it('runs when the server process starts', async () => {
    const b = await csvBatch({ seed: 'recover-2', returns: 3 });
    const parts = { returns: b.files.returns!, line_items: b.files.line_items! };
    const first = await upload(env.user, parts);
    expect(first.status).toBe(201);
    await interrupt(first.body.id);
    const server = await startServer(env.ctx.db.url);
    try {
      expect(server.output()).toContain(`[server] batch ${first.body.id} (2 files) was left unfinished by a stop`);
      const [row] = await env.ctx.dataSource.query(`SELECT state FROM filing_batch WHERE id = $1`, [first.body.id]);
      expect(row.state).toBe('rejected');
    } finally {
      await server.stop();
    }
    expect((await upload(env.user, parts)).status).toBe(201);
  });
});
