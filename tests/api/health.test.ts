import fs from 'node:fs';
import path from 'node:path';
import { Client } from 'pg';
import request from 'supertest';
import { createTestContext, type TestContext } from '../helpers/test-app';
import { HealthResponseSchema } from '../../shared/health';

describe('GET /api/health', () => {
  let ctx: TestContext;
  beforeAll(async () => {
    ctx = await createTestContext();
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('reports database, queue and mail as up, in the shared schema', async () => {
    const res = await request(ctx.app).get('/api/health');
    expect(res.status).toBe(200);
    const body = HealthResponseSchema.parse(res.body);
    expect(body.status).toBe('ok');
    expect(body.checks.database).toMatchObject({ ok: true, detail: expect.stringContaining('schema up to date') });
    expect(body.checks.queue.ok).toBe(true);
    expect(body.checks.mail.ok).toBe(true);
  });

  it('answers 503 with a reason when the mail server is unreachable', async () => {
    const other = await createTestContext({ SMTP_PORT: '9' });
    try {
      const res = await request(other.app).get('/api/health');
      expect(res.status).toBe(503);
      expect(res.body.status).toBe('degraded');
      expect(res.body.checks.mail.ok).toBe(false);
      expect(res.body.checks.mail.detail).toMatch(/127\.0\.0\.1:9 not reachable/);
      expect(res.body.checks.database.ok).toBe(true);
    } finally {
      await other.close();
    }
  });

  it('answers 503 with a reason when the database is down', async () => {
    const other = await createTestContext();
    try {
      await other.boss.stop({ graceful: false, wait: true });
      await other.dataSource.destroy();
      const res = await request(other.app).get('/api/health');
      expect(res.status).toBe(503);
      expect(res.body.checks.database).toMatchObject({ ok: false, detail: 'not connected to PostgreSQL' });
      expect(res.body.checks.queue.ok).toBe(false);
    } finally {
      await other.close();
    }
  });

  it('reports pending migrations as a database problem', async () => {
    const other = await createTestContext();
    try {
      // The application login may not touch the migrations table; the owner's may.
      const owner = new Client({ connectionString: other.db.ownerUrl });
      await owner.connect();
      try {
        await owner.query(`DELETE FROM migrations WHERE id = (SELECT max(id) FROM migrations)`);
      } finally {
        await owner.end();
      }
      const res = await request(other.app).get('/api/health');
      expect(res.status).toBe(503);
      expect(res.body.checks.database.detail).toMatch(/migrations are pending/);
    } finally {
      await other.close();
    }
  });
});

describe('API fallbacks', () => {
  let ctx: TestContext;
  beforeAll(async () => {
    ctx = await createTestContext();
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('answers unknown API routes with a JSON 404', async () => {
    const res = await request(ctx.app).get('/api/no-such-thing');
    expect(res.status).toBe(404);
    expect(res.body.error).toContain('/api/no-such-thing');
  });

  it('answers malformed JSON with 400 and no stack trace', async () => {
    const res = await request(ctx.app).post('/api/health').set('Content-Type', 'application/json').send('{"a":');
    expect(res.status).toBe(400);
    expect(JSON.stringify(res.body)).not.toMatch(/at .*\.ts|node_modules/);
  });

  it('serves the web build for app routes (single-page fallback)', async () => {
    const res = await request(ctx.app).get('/about');
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/text\/html/);
    expect(res.text).toContain('<div id="root">');
  });

  it("serves each screen's own script from the build, and a 404 (not the page) for a script it does not hold", async () => {
    // Async routes (docs/design.md#web-bundle): besides the scripts index.html names, the build
    // holds one file per screen, fetched on the first visit to that screen.
    const jsDir = path.join(ctx.config.WEB_DIST, '_expo', 'static', 'js', 'web');
    const html = fs.readFileSync(path.join(ctx.config.WEB_DIST, 'index.html'), 'utf8');
    const screenChunks = fs.readdirSync(jsDir).filter((f) => f.endsWith('.js') && !html.includes(`/${f}`));
    expect(screenChunks.length).toBeGreaterThan(5);
    const chunk = await request(ctx.app).get(`/_expo/static/js/web/${encodeURIComponent(screenChunks[0])}`);
    expect(chunk.status).toBe(200);
    expect(chunk.headers['content-type']).toMatch(/javascript/);

    const missing = await request(ctx.app).get('/_expo/static/js/web/queue-0000000000000000.js');
    expect(missing.status).toBe(404);
    expect(missing.headers['content-type']).toMatch(/text\/plain/);
    expect(missing.text).toContain('/_expo/static/js/web/queue-0000000000000000.js');
  });

  it('sends security headers', async () => {
    const res = await request(ctx.app).get('/api/health');
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    expect(res.headers['content-security-policy']).toContain("default-src 'self'");
    expect(res.headers['x-powered-by']).toBeUndefined();
  });
});
