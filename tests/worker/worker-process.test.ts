import { startTsx, processEnv } from '../helpers/processes';
import { createTestDatabase, type TestDatabase } from '../helpers/test-db';

describe('worker process', () => {
  let db: TestDatabase;
  beforeAll(async () => {
    db = await createTestDatabase();
  });
  afterAll(async () => {
    await db.drop();
  });

  it('starts, creates its queues and stops cleanly on SIGTERM', async () => {
    const w = await startTsx('worker/main.ts', processEnv(db.url), /\[worker\] ready/);
    const code = await w.stop('SIGTERM');
    expect({ code, out: w.output() }).toEqual({ code: 0, out: expect.stringContaining('[worker] SIGTERM: stopping') });
  });

  it('refuses to start with a clear message when the configuration is wrong', async () => {
    await expect(startTsx('worker/main.ts', { DATABASE_URL: 'nonsense' }, /\[worker\] ready/, 20_000)).rejects.toThrow(
      /DATABASE_URL: must be a postgres:\/\/ connection string/,
    );
  });
});
