/**
 * The worker's guard against PostgreSQL outages (server/queue/connection-loss.ts): which
 * errors count as a lost connection, and that the process survives those and still ends on
 * any other unhandled rejection. SQLSTATE codes from the PostgreSQL documentation, Appendix A
 * "PostgreSQL Error Codes"; the refused connection is a real one (a closed loopback port).
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Client, DatabaseError } from 'pg';
import { isConnectionLoss } from '../../../server/queue/connection-loss';
import { freePort } from '../../helpers/processes';

function pgError(code: string, message: string): DatabaseError {
  const e = new DatabaseError(message, message.length, 'error');
  e.code = code;
  return e;
}

describe('isConnectionLoss', () => {
  it('is true for a real refused connection (nothing listens on the port)', async () => {
    const port = await freePort();
    const c = new Client({ connectionString: `postgres://x:y@127.0.0.1:${port}/none`, connectionTimeoutMillis: 10_000 });
    const err = await c.connect().then(
      () => null,
      (e: unknown) => e,
    );
    expect(err).not.toBeNull();
    expect(isConnectionLoss(err)).toBe(true);
  });

  it.each([
    ['57P01', 'terminating connection due to administrator command'],
    ['57P02', 'terminating connection due to crash of another server process'],
    ['57P03', 'the database system is shutting down'],
    ['08006', 'connection failure'],
    ['08001', 'sqlclient unable to establish sqlconnection'],
  ])('is true for SQLSTATE %s (%s)', (code, message) => {
    expect(isConnectionLoss(pgError(code, message))).toBe(true);
  });

  it("is true for node-postgres's own words when a connection ends under a query", () => {
    expect(isConnectionLoss(new Error('Connection terminated unexpectedly'))).toBe(true);
    expect(isConnectionLoss(new Error('Client has encountered a connection error and is not queryable'))).toBe(true);
  });

  it('is false for errors in the statement or the data, and for things that are not errors', () => {
    expect(isConnectionLoss(pgError('42601', 'syntax error at or near "SELEC"'))).toBe(false);
    expect(isConnectionLoss(pgError('23505', 'duplicate key value violates unique constraint'))).toBe(false);
    expect(isConnectionLoss(pgError('57014', 'canceling statement due to statement timeout'))).toBe(false);
    expect(isConnectionLoss(new Error('Connection terminated by the office'))).toBe(false);
    expect(isConnectionLoss(undefined)).toBe(false);
    expect(isConnectionLoss('ECONNREFUSED')).toBe(false);
  });
});

describe('surviveConnectionLoss', () => {
  it('logs a lost connection and carries on; ends with exit 1 on any other unhandled rejection', () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'plumbline-loss-'));
    const script = path.join(dir, 'probe.ts');
    const mod = path.resolve(__dirname, '../../../server/queue/connection-loss.ts');
    fs.writeFileSync(
      script,
      `import { surviveConnectionLoss } from ${JSON.stringify(mod)};
surviveConnectionLoss('probe', (l) => console.log(l));
void Promise.reject(Object.assign(new Error('the database system is shutting down'), { code: '57P03' }));
setTimeout(() => { console.log('still running'); void Promise.reject(new Error('a real defect')); }, 200);
setTimeout(() => console.log('should not get here'), 5000);
`,
    );
    try {
      const r = spawnSync(process.execPath, ['--import', 'tsx', script], { cwd: path.resolve(__dirname, '../../..'), encoding: 'utf8', timeout: 120_000 });
      expect(r.stdout).toMatch(/\[probe\] database connection lost while a job was ending \(the database system is shutting down\)/);
      expect(r.stdout).toMatch(/still running/);
      expect(r.stdout).toMatch(/\[probe\] unhandled rejection: Error: a real defect/);
      expect(r.stdout).not.toMatch(/should not get here/);
      expect(r.status).toBe(1);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});
