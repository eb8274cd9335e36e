/**
 * Issue 12, item 1: hostile uploads cost a clear 4xx, never the server. A shared-strings
 * bomb, a 2-million-row sheet and a 60 MB upload each get a 4xx within seconds while this
 * process (the server under supertest) stays under 500 MB and keeps answering
 * GET /api/health. The large fixtures are built in a temp folder at test time, as streams
 * (the test's own memory counts too: it is the same process).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Readable } from 'node:stream';
import request from 'supertest';
import { signIn, type SignedIn } from '../helpers/auth';
import { createTestContext, type TestContext } from '../helpers/test-app';

// exceljs writes its workbooks with archiver; the test uses it to stream fixtures to disk.
// eslint-disable-next-line @typescript-eslint/no-require-imports
const archiver = require('archiver') as (
  format: 'zip',
  opts: { zlib: { level: number } },
) => {
  pipe(out: NodeJS.WritableStream): void;
  append(source: string | Readable, data: { name: string }): void;
  finalize(): Promise<void>;
};

jest.setTimeout(300_000);

/** A stream of `head`, `item(0..n-1)`, `tail`, made as it is read. */
function lazy(head: string, n: number, item: (i: number) => string, tail: string): Readable {
  let i = 0;
  let started = false;
  return new Readable({
    read() {
      if (!started) {
        started = true;
        this.push(head);
      }
      let s = '';
      while (i < n && s.length < 1 << 20) s += item(i++);
      if (s) this.push(s);
      if (i >= n) {
        this.push(tail);
        this.push(null);
      }
    },
  });
}

const REL = 'http://schemas.openxmlformats.org/officeDocument/2006/relationships';

/** A minimal SpreadsheetML package (ECMA-376 Part 1): one sheet "amounts", optional shared strings. */
async function writeXlsx(file: string, sheet: Readable, sharedStrings: Readable | null): Promise<void> {
  const out = fs.createWriteStream(file);
  const zip = archiver('zip', { zlib: { level: 6 } });
  zip.pipe(out);
  zip.append(
    `<?xml version="1.0"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="${REL}/officeDocument" Target="xl/workbook.xml"/></Relationships>`,
    { name: '_rels/.rels' },
  );
  zip.append(
    `<?xml version="1.0"?><workbook xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" xmlns:r="${REL}"><sheets><sheet name="amounts" sheetId="1" r:id="rId1"/></sheets></workbook>`,
    { name: 'xl/workbook.xml' },
  );
  zip.append(
    `<?xml version="1.0"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="${REL}/worksheet" Target="worksheets/sheet1.xml"/><Relationship Id="rId2" Type="${REL}/sharedStrings" Target="sharedStrings.xml"/></Relationships>`,
    { name: 'xl/_rels/workbook.xml.rels' },
  );
  if (sharedStrings) zip.append(sharedStrings, { name: 'xl/sharedStrings.xml' });
  zip.append(sheet, { name: 'xl/worksheets/sheet1.xml' });
  await Promise.all([zip.finalize(), new Promise((r) => out.on('close', r))]);
}

/**
 * Samples this process's resident memory until stopped; returns the peak's growth over the
 * start in MB. The server shares its process with jest here, and a jest worker that ran other
 * test files first already holds a few hundred MB of their modules and heap; the growth is what
 * the upload itself cost (its reading thread included: threads share the process's memory).
 */
function watchMemory(): () => number {
  const base = process.memoryUsage().rss;
  let peak = base;
  const timer = setInterval(() => (peak = Math.max(peak, process.memoryUsage().rss)), 25);
  return () => {
    clearInterval(timer);
    return Math.round((Math.max(peak, process.memoryUsage().rss) - base) / (1024 * 1024));
  };
}

/**
 * Runs `send` while asking GET /api/health over and over; the server must answer every one.
 * @returns the response, its time, the peak memory and how many health answers came
 */
async function underWatch(ctx: TestContext, send: () => Promise<request.Response>) {
  const stop = watchMemory();
  let done = false;
  const healthStatuses: number[] = [];
  const health = (async () => {
    while (!done) healthStatuses.push((await request(ctx.app).get('/api/health')).status);
  })();
  const t0 = performance.now();
  const cpu0 = process.cpuUsage(); // this process, all its threads
  try {
    const res = await send();
    const cpu = process.cpuUsage(cpu0);
    return { res, seconds: (performance.now() - t0) / 1000, cpuSeconds: (cpu.user + cpu.system) / 1e6, growthMb: stop(), healthStatuses };
  } finally {
    done = true;
    await health;
    stop();
  }
}

/** The limit for the server's memory while it refuses a hostile upload. */
const SERVER_BUDGET_MB = 500;
/** Allowance for the server process at rest: 136 MB RSS measured under `npm start` after sign-in and a queue page. */
const RESTING_SERVER_MB = 150;

describe('hostile uploads (issue 12)', () => {
  let ctx: TestContext;
  let examiner: SignedIn;
  let clerk: SignedIn;
  let dir: string;
  const bomb = () => path.join(dir, 'strings-bomb.xlsx');
  const tall = () => path.join(dir, 'two-million-rows.xlsx');
  const big = () => path.join(dir, 'sixty-mb.csv');
  const log: string[] = [];

  beforeAll(async () => {
    dir = fs.mkdtempSync(path.join(os.tmpdir(), 'plumbline-hardening-'));
    ctx = await createTestContext();
    examiner = await signIn(ctx, 'examiner');
    clerk = await signIn(ctx, 'clerk');
    // 6 million one-character strings (the bomb: 30 million in 11.8 MB); the cap is 4 million.
    await writeXlsx(
      bomb(),
      lazy('<worksheet><sheetData>', 1, () => '<row r="1"><c r="A1" t="s"><v>0</v></c></row>', '</sheetData></worksheet>'),
      lazy('<sst>', 6_000_000, (i) => `<si><t>${i % 10}</t></si>`, '</sst>'),
    );
    await writeXlsx(
      tall(),
      lazy('<worksheet><sheetData>', 2_000_000, (i) => `<row r="${i + 1}"><c r="A${i + 1}"><v>${i + 1}.25</v></c></row>`, '</sheetData></worksheet>'),
      null,
    );
    // 60 MB of amounts, over the analysis route's 50 MB.
    const line = '1234.56\n';
    fs.writeFileSync(big(), Buffer.alloc(60 * 1024 * 1024, line));
  });
  afterAll(async () => {
    await ctx?.close();
    if (dir) fs.rmSync(dir, { recursive: true, force: true });
    // The measurements, for the closing note.
    console.log(log.join('\n'));
  });

  const analyse = (file: string, name: string) => () =>
    examiner.agent.post('/api/analyses/digits').set('X-CSRF-Token', examiner.csrf).attach('file', file, name);

  it('refuses a shared-strings bomb on the analysis route with 413 naming the limit, and stays up', async () => {
    const r = await underWatch(ctx, analyse(bomb(), 'bomb.xlsx'));
    log.push(
      `bomb → analyses: ${r.res.status} in ${r.seconds.toFixed(1)} s (CPU ${r.cpuSeconds.toFixed(1)} s), RSS growth ${r.growthMb} MB, ${r.healthStatuses.length} health answers`,
    );
    expect(r.res.status).toBe(413);
    expect(r.res.body.error).toMatch(/^bomb\.xlsx: .*more than 4,000,000 different texts.*Split the data into several smaller files/);
    expect(r.res.body.limit).toBe('maxSharedStrings');
    expect(r.growthMb).toBeLessThan(SERVER_BUDGET_MB - RESTING_SERVER_MB);
    expect(r.healthStatuses.length).toBeGreaterThan(0);
    expect(r.healthStatuses.every((s) => s === 200)).toBe(true);
  });

  it('refuses the same bomb as a batch workbook with 422 naming the limit, nothing stored', async () => {
    const r = await underWatch(ctx, () => clerk.agent.post('/api/batches').set('X-CSRF-Token', clerk.csrf).attach('file', bomb(), 'bomb.xlsx'));
    log.push(
      `bomb → batches: ${r.res.status} in ${r.seconds.toFixed(1)} s (CPU ${r.cpuSeconds.toFixed(1)} s), RSS growth ${r.growthMb} MB, ${r.healthStatuses.length} health answers`,
    );
    expect(r.res.status).toBe(422);
    expect(r.res.body.errors[0]).toMatchObject({ file: 'bomb.xlsx', message: expect.stringMatching(/more than 4,000,000 different texts/) });
    expect(r.growthMb).toBeLessThan(SERVER_BUDGET_MB - RESTING_SERVER_MB);
    expect(r.healthStatuses.every((s) => s === 200)).toBe(true);
    const rows = await ctx.dataSource.query(`SELECT count(*)::int AS n FROM tax_return`);
    expect(rows[0].n).toBe(0);
  });

  it('refuses a 2-million-row sheet with 413 at the row limit, and stays up', async () => {
    const r = await underWatch(ctx, analyse(tall(), 'tall.xlsx'));
    log.push(
      `2,000,000 rows → analyses: ${r.res.status} in ${r.seconds.toFixed(1)} s (CPU ${r.cpuSeconds.toFixed(1)} s), RSS growth ${r.growthMb} MB, ${r.healthStatuses.length} health answers`,
    );
    expect(r.res.status).toBe(413);
    expect(r.res.body.error).toMatch(/tall\.xlsx, sheet "amounts" has more than 1,048,576 rows.*Split/);
    expect(r.growthMb).toBeLessThan(SERVER_BUDGET_MB - RESTING_SERVER_MB);
    expect(r.healthStatuses.every((s) => s === 200)).toBe(true);
  });

  it('refuses a 60 MB upload with 413 and leaves no spool file behind', async () => {
    const spool = path.resolve(__dirname, '..', '..', '.data', 'uploads');
    const mine = () => (fs.existsSync(spool) ? fs.readdirSync(spool).filter((n) => n.startsWith(`${process.pid}-`)) : []);
    const r = await underWatch(ctx, analyse(big(), 'big.csv'));
    log.push(
      `60 MB → analyses: ${r.res.status} in ${r.seconds.toFixed(1)} s (CPU ${r.cpuSeconds.toFixed(1)} s), RSS growth ${r.growthMb} MB, ${r.healthStatuses.length} health answers`,
    );
    expect(r.res.status).toBe(413);
    expect(r.res.body.error).toMatch(/larger than 50 MB.*Split/);
    expect(r.growthMb).toBeLessThan(SERVER_BUDGET_MB - RESTING_SERVER_MB);
    expect(r.healthStatuses.every((s) => s === 200)).toBe(true);
    await new Promise((res) => setImmediate(res));
    expect(mine()).toEqual([]);
  });

  it('answers a body cut short with 400 and a message on every upload route, not 500', async () => {
    const cut = '--XYZ\r\nContent-Disposition: form-data; name="file"; filename="a.csv"\r\nContent-Type: text/csv\r\n\r\namount\n1.00\n'; // no closing boundary
    for (const [client, url] of [
      [examiner, '/api/analyses/digits'],
      [clerk, '/api/batches'],
    ] as const) {
      const res = await client.agent.post(url).set('X-CSRF-Token', client.csrf).set('Content-Type', 'multipart/form-data; boundary=XYZ').send(cut);
      expect({ url, status: res.status }).toEqual({ url, status: 400 });
      expect(res.body.error).toMatch(/not a readable multipart form/);
    }
    const noBoundary = await examiner.agent
      .post('/api/analyses/digits')
      .set('X-CSRF-Token', examiner.csrf)
      .set('Content-Type', 'multipart/form-data')
      .send('x');
    expect(noBoundary.status).toBe(400);
  });

  it('answers a file named .xlsx that is not a workbook with a clear 422', async () => {
    const res = await examiner.agent
      .post('/api/analyses/digits')
      .set('X-CSRF-Token', examiner.csrf)
      .attach('file', Buffer.from('amount\n1.00\n'), 'amounts.xlsx');
    expect(res.status).toBe(422);
    expect(res.body.error).toMatch(/"amounts\.xlsx" is named \.xlsx but is a text file\. .*save it as an Excel Workbook/);
    // A ZIP that is no workbook (a cut-off file): still 422, with the reason.
    const zipish = Buffer.concat([Buffer.from([0x50, 0x4b, 0x03, 0x04]), Buffer.alloc(200)]);
    const bad = await examiner.agent.post('/api/analyses/digits').set('X-CSRF-Token', examiner.csrf).attach('file', zipish, 'cut.xlsx');
    expect(bad.status).toBe(422);
    expect(bad.body.error).toMatch(/cut\.xlsx: it is not a readable XLSX workbook: no ZIP directory/);
  });
});
