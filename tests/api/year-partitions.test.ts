/**
 * line_item and return_score partitioned by tax year (docs/design.md#partitions-by-tax-year):
 * intake makes a new year's partitions and its rows land there, scores and cases follow,
 * two callers racing for one new year both succeed, rows that went to DEFAULT move into a
 * year's partition when it is made, the migration moves existing rows both ways, and an old
 * year is archived by detaching its partitions.
 */
import { Client } from 'pg';
import { BatchCreatedSchema } from '../../shared/returns/batch-rows';
import { createDataSource } from '../../server/db/data-source';
import { detachYear, ensureYearPartitions, listYearPartitions } from '../../server/returns/year-partitions.repository';
import { scoreBatchNow } from '../../server/scoring/scoring.service';
import { signedInContext } from '../helpers/auth';
import { csvBatch, upload } from '../helpers/batches';
import { createTestDatabase } from '../helpers/test-db';
import { loadGeneratedBatch, loadScoredBatch } from '../helpers/scored-batch';

jest.setTimeout(120_000);

/** Rows per partition of line_item and return_score, as "table:partition" → count. */
async function rowsByPartition(q: { query(sql: string): Promise<unknown> }): Promise<Record<string, number>> {
  const rows = (await q.query(
    `SELECT 'line_item' AS t, tableoid::regclass::text AS p, count(*)::int AS n FROM line_item GROUP BY 2
     UNION ALL SELECT 'return_score', tableoid::regclass::text, count(*)::int FROM return_score GROUP BY 2`,
  )) as { t: string; p: string; n: number }[];
  return Object.fromEntries(rows.map((r) => [`${r.t}:${r.p}`, r.n]));
}

describe('tax-year partitions: intake and scoring', () => {
  const env = signedInContext('clerk');

  it('makes the partitions of a batch’s years and stores each line and score in its year’s partition; a later batch with a new year works too', async () => {
    const ds = env.ctx.dataSource;
    expect((await listYearPartitions(ds)).map((p) => p.partition)).toEqual(['line_item_default', 'return_score_default']);

    const first = await csvBatch({ seed: 'partition-first', returns: 12, years: [2023, 2024] });
    const res = await upload(env.user, { returns: first.files.returns!, line_items: first.files.line_items!, statements: first.files.statements! });
    expect(res.status).toBe(201);
    const a = BatchCreatedSchema.parse(res.body);
    await scoreBatchNow(ds, a.id);

    const parts = await listYearPartitions(ds);
    expect(parts.filter((p) => p.year !== null).map((p) => `${p.table}:${p.year}`)).toEqual([
      'line_item:2023',
      'line_item:2024',
      'return_score:2023',
      'return_score:2024',
    ]);
    let by = await rowsByPartition(ds);
    expect(by['line_item:line_item_default']).toBeUndefined();
    expect(by['return_score:return_score_default']).toBeUndefined();
    expect(by['return_score:return_score_y2023'] + by['return_score:return_score_y2024']).toBe(12);
    expect(by['line_item:line_item_y2023'] + by['line_item:line_item_y2024']).toBe(first.counts.lineItems);
    // Each row's partition is its return's year, and the column says so too.
    const misplaced = await ds.query(
      `SELECT count(*)::int AS n FROM line_item li JOIN tax_return r ON r.id = li.return_id
        WHERE li.tax_year <> r.tax_year OR li.tableoid::regclass::text <> 'line_item_y' || r.tax_year`,
    );
    expect(misplaced[0].n).toBe(0);
    const scoresOff = await ds.query(
      `SELECT count(*)::int AS n FROM return_score s JOIN tax_return r ON r.id = s.return_id
        WHERE s.tax_year <> r.tax_year OR s.tableoid::regclass::text <> 'return_score_y' || r.tax_year`,
    );
    expect(scoresOff[0].n).toBe(0);
    // Cases carry their score's year, the other half of the score's key.
    const cases = await ds.query(
      `SELECT count(*)::int AS n, count(*) FILTER (WHERE c.tax_year = s.tax_year)::int AS matching
         FROM exam_case c JOIN return_score s ON s.id = c.score_id AND s.tax_year = c.tax_year`,
    );
    expect(cases[0].n).toBe(cases[0].matching);
    expect((await ds.query(`SELECT count(*)::int AS n FROM exam_case`))[0].n).toBe(cases[0].n);

    // A later batch brings 2021, a year with no partition yet.
    const second = await csvBatch({ seed: 'partition-second', returns: 5, years: [2021] });
    const res2 = await upload(env.user, { returns: second.files.returns!, line_items: second.files.line_items! });
    expect(res2.status).toBe(201);
    await scoreBatchNow(ds, BatchCreatedSchema.parse(res2.body).id);
    by = await rowsByPartition(ds);
    expect(by['line_item:line_item_y2021']).toBe(second.counts.lineItems);
    expect(by['return_score:return_score_y2021']).toBe(5);
    expect(by['line_item:line_item_default']).toBeUndefined();
    expect(by['return_score:return_score_default']).toBeUndefined();
  });

  it('lets two callers race for one new year: both succeed and exactly one makes the partitions', async () => {
    const url = env.ctx.db.url; // the application role, as intake runs
    const clients = [new Client({ connectionString: url }), new Client({ connectionString: url })];
    await Promise.all(clients.map((c) => c.connect()));
    try {
      const made = await Promise.all(clients.map((c) => c.query(`SELECT ensure_tax_year_partitions(2019::smallint) AS made`)));
      expect(made.map((m) => m.rows[0].made).sort()).toEqual([false, true]);
    } finally {
      await Promise.all(clients.map((c) => c.end()));
    }
    expect(await ensureYearPartitions(env.ctx.dataSource, [2019, 2019])).toEqual([]);
    const names = (await listYearPartitions(env.ctx.dataSource)).map((p) => p.partition);
    expect(names).toEqual(expect.arrayContaining(['line_item_y2019', 'return_score_y2019']));
  });

  it('refuses a year that is not four digits, saying what it wants', async () => {
    await expect(ensureYearPartitions(env.ctx.dataSource, [99])).rejects.toThrow(/four digits \(got 99\)/);
  });
});

describe('tax-year partitions: rows already in DEFAULT', () => {
  it('moves a year’s lines, scores and the cases’ link into the year’s partition when it is made', async () => {
    const db = await createTestDatabase();
    const ds = createDataSource(db.url, { poolSize: 2 });
    await ds.initialize();
    try {
      const b = await loadScoredBatch(ds, { seed: 'partition-default', returns: 30, plantShare: 0.3, years: [2020] });
      // Written as something that skipped ensureYearPartitions would: the 2020 partitions are
      // taken away again (as the owner) with their rows, which go back through DEFAULT.
      const owner = new Client({ connectionString: db.ownerUrl });
      await owner.connect();
      try {
        await owner.query('BEGIN');
        await owner.query(`ALTER TABLE exam_case DROP CONSTRAINT exam_case_score_fkey`);
        await owner.query(`ALTER TABLE line_item DETACH PARTITION line_item_y2020`);
        await owner.query(`ALTER TABLE return_score DETACH PARTITION return_score_y2020`);
        await owner.query(`INSERT INTO line_item SELECT * FROM line_item_y2020`);
        await owner.query(`INSERT INTO return_score OVERRIDING SYSTEM VALUE SELECT * FROM return_score_y2020`);
        await owner.query(`DROP TABLE line_item_y2020, return_score_y2020`);
        await owner.query(`ALTER TABLE exam_case ADD CONSTRAINT exam_case_score_fkey FOREIGN KEY (score_id, tax_year) REFERENCES return_score (id, tax_year)`);
        await owner.query('COMMIT');
      } finally {
        await owner.end();
      }
      const before = await rowsByPartition(ds);
      expect(before['line_item:line_item_default']).toBe(b.generated.lineItems.length);
      expect(before['return_score:return_score_default']).toBe(30);
      const casesBefore = (await ds.query(`SELECT count(*)::int AS n FROM exam_case`))[0].n;
      expect(casesBefore).toBeGreaterThan(0);

      expect(await ensureYearPartitions(ds, [2020])).toEqual([2020]);
      const after = await rowsByPartition(ds);
      expect(after).toEqual({ 'line_item:line_item_y2020': b.generated.lineItems.length, 'return_score:return_score_y2020': 30 });
      const linked = await ds.query(`SELECT count(*)::int AS n FROM exam_case c JOIN return_score s ON s.id = c.score_id AND s.tax_year = c.tax_year`);
      expect(linked[0].n).toBe(casesBefore);
      const fk = await ds.query(`SELECT count(*)::int AS n FROM pg_constraint WHERE conname = 'exam_case_score_fkey' AND conrelid = 'exam_case'::regclass`);
      expect(fk[0].n).toBe(1);
    } finally {
      await ds.destroy();
      await db.drop();
    }
  });
});

describe('tax-year partitions: the migration with rows in the tables', () => {
  it('puts existing rows back into plain tables on down and into year partitions on up, ids and cases kept', async () => {
    const db = await createTestDatabase();
    const ds = createDataSource(db.ownerUrl, { poolSize: 2 });
    await ds.initialize();
    try {
      await loadScoredBatch(ds, { seed: 'partition-migration', returns: 24, plantShare: 0.3, years: [2022, 2023, 2024] });
      const snapshot = async () => ({
        lines: (
          await ds.query(
            `SELECT md5(string_agg(return_id || ':' || line_no || ':' || line_code || ':' || amount, ',' ORDER BY return_id, line_no)) AS h FROM line_item`,
          )
        )[0].h,
        scores: (
          await ds.query(
            `SELECT md5(string_agg(id || ':' || return_id || ':' || profile_version || ':' || coalesce(risk_score::text, '-'), ',' ORDER BY id)) AS h FROM return_score`,
          )
        )[0].h,
        cases: (await ds.query(`SELECT md5(string_agg(id || ':' || score_id, ',' ORDER BY id)) AS h FROM exam_case`))[0].h,
      });
      const start = await snapshot();

      await ds.undoLastMigration({ transaction: 'each' });
      const kinds = await ds.query(
        `SELECT relname, relkind FROM pg_class WHERE relname IN ('line_item', 'return_score', 'line_item_default', 'return_score_default') ORDER BY relname`,
      );
      expect(kinds).toEqual([
        { relname: 'line_item', relkind: 'r' },
        { relname: 'return_score', relkind: 'r' },
      ]);
      expect(await snapshot()).toEqual(start);
      // The identity goes on after the highest id kept.
      const maxId = (await ds.query(`SELECT max(id)::bigint AS m FROM return_score`))[0].m;
      const next = (await ds.query(`SELECT nextval(pg_get_serial_sequence('return_score', 'id'))::bigint AS n`))[0].n;
      expect(BigInt(next)).toBeGreaterThan(BigInt(maxId));

      await ds.runMigrations({ transaction: 'each' });
      expect(await snapshot()).toEqual(start);
      const by = await rowsByPartition(ds);
      expect(Object.keys(by).sort()).toEqual([
        'line_item:line_item_y2022',
        'line_item:line_item_y2023',
        'line_item:line_item_y2024',
        'return_score:return_score_y2022',
        'return_score:return_score_y2023',
        'return_score:return_score_y2024',
      ]);
      const unset = await ds.query(`SELECT count(*)::int AS n FROM exam_case c JOIN return_score s ON s.id = c.score_id WHERE c.tax_year <> s.tax_year`);
      expect(unset[0].n).toBe(0);
      // Each partition has the parent's indexes.
      const idx = await ds.query(
        `SELECT c.relname AS part, count(*)::int AS n FROM pg_index i JOIN pg_class c ON c.oid = i.indrelid
          WHERE c.relname LIKE 'return_score_y%' GROUP BY 1 ORDER BY 1`,
      );
      expect(idx.map((r: { n: number }) => r.n)).toEqual([3, 3, 3]);
    } finally {
      await ds.destroy();
      await db.drop();
    }
  });
});

describe('tax-year partitions: archiving a year', () => {
  it('detaches a year without cases into archive tables, refuses one with cases, and a late return of the detached year gets fresh partitions', async () => {
    const db = await createTestDatabase();
    const app = createDataSource(db.url, { poolSize: 2 });
    const owner = createDataSource(db.ownerUrl, { poolSize: 1 });
    await app.initialize();
    await owner.initialize();
    try {
      const old = await loadGeneratedBatch(app, { seed: 'partition-archive-old', returns: 6, years: [2017] });
      await loadScoredBatch(app, { seed: 'partition-archive-new', returns: 20, plantShare: 0.5, years: [2024] });
      expect((await app.query(`SELECT count(*)::int AS n FROM exam_case WHERE tax_year = 2024`))[0].n).toBeGreaterThan(0);

      await expect(detachYear(owner, 2024)).rejects.toThrow(/case.* of 2024 still refer to that year's scores.*Nothing was changed/);
      await expect(detachYear(owner, 2011)).rejects.toThrow(/no partitions of 2011/);
      expect((await listYearPartitions(app)).filter((p) => p.year === 2024)).toHaveLength(2);

      const r = await detachYear(owner, 2017);
      expect(r).toEqual({
        year: 2017,
        tables: [
          { table: 'archive_line_item_y2017', rows: old.generated.lineItems.length },
          { table: 'archive_return_score_y2017', rows: 0 },
        ],
      });
      expect((await listYearPartitions(app)).filter((p) => p.year === 2017)).toEqual([]);
      expect((await app.query(`SELECT count(*)::int AS n FROM line_item WHERE tax_year = 2017`))[0].n).toBe(0);

      // An amended 2017 return arrives later: its rows get new partitions, not DEFAULT.
      const late = await loadGeneratedBatch(app, { seed: 'partition-archive-late', returns: 2, years: [2017] });
      const by = await rowsByPartition(app);
      expect(by['line_item:line_item_y2017']).toBe(late.generated.lineItems.length);
      expect(by['line_item:line_item_default']).toBeUndefined();
      expect((await app.query(`SELECT count(*)::int AS n FROM archive_line_item_y2017`))[0].n).toBe(old.generated.lineItems.length);
    } finally {
      await app.destroy();
      await owner.destroy();
      await db.drop();
    }
  });
});
