import { ConfigError, loadConfig } from '../../server/config';

describe('loadConfig', () => {
  it('fills the defaults README.md lists ("What runs where")', () => {
    const c = loadConfig({ DATABASE_URL: 'postgres://u:p@127.0.0.1:54329/plumbline' });
    expect(c.PORT).toBe(8080);
    expect(c.SMTP_PORT).toBe(1025);
    expect(c.publicUrl).toBe('http://127.0.0.1:8080');
  });

  it('lists every problem with the variable name', () => {
    let err: unknown;
    try {
      loadConfig({ DATABASE_URL: 'mysql://x', PORT: 'eighty', SESSION_SECRET: 'short' });
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(ConfigError);
    const msg = (err as Error).message;
    expect(msg).toMatch(/DATABASE_URL: must be a postgres:\/\/ connection string/);
    expect(msg).toMatch(/PORT:/);
    expect(msg).toMatch(/SESSION_SECRET: must be at least 16 characters/);
  });

  it('runs one server process unless WEB_CONCURRENCY asks for more, and refuses a count that is not one', () => {
    const base = { DATABASE_URL: 'postgres://u:p@127.0.0.1:54329/plumbline' };
    expect(loadConfig(base).WEB_CONCURRENCY).toBe(1);
    expect(loadConfig({ ...base, WEB_CONCURRENCY: '2' }).WEB_CONCURRENCY).toBe(2);
    expect(() => loadConfig({ ...base, WEB_CONCURRENCY: '0' })).toThrow(/WEB_CONCURRENCY: must be at least 1/);
    expect(() => loadConfig({ ...base, WEB_CONCURRENCY: '1.5' })).toThrow(/WEB_CONCURRENCY: must be a whole number of server processes/);
    expect(() => loadConfig({ ...base, WEB_CONCURRENCY: 'two' })).toThrow(/WEB_CONCURRENCY: must be a whole number of server processes/);
    expect(() => loadConfig({ ...base, WEB_CONCURRENCY: '100' })).toThrow(/WEB_CONCURRENCY: must be at most 32/);
  });

  it('requires DATABASE_URL', () => {
    expect(() => loadConfig({})).toThrow(/DATABASE_URL: is required/);
  });

  describe('TRUST_PROXY', () => {
    const base = { DATABASE_URL: 'postgres://u:p@127.0.0.1:54329/plumbline' };
    it('trusts no proxy when unset or empty, so the socket address counts', () => {
      expect(loadConfig(base).TRUST_PROXY).toBe(false);
      expect(loadConfig({ ...base, TRUST_PROXY: ' ' }).TRUST_PROXY).toBe(false);
    });
    it("takes addresses, CIDR ranges and Express's range names, comma-separated", () => {
      expect(loadConfig({ ...base, TRUST_PROXY: '10.0.0.5, 192.168.1.0/24,loopback, fd00::/8' }).TRUST_PROXY).toEqual([
        '10.0.0.5',
        '192.168.1.0/24',
        'loopback',
        'fd00::/8',
      ]);
    });
    it.each(['true', '1', '*', '10.0.0.0/33', 'proxy.example', '10.0.0.5/24/1'])('refuses %p with a message saying what to write', (value) => {
      expect(() => loadConfig({ ...base, TRUST_PROXY: value })).toThrow(/TRUST_PROXY: must name the proxies to trust/);
    });
  });
});
