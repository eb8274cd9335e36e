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

  it('requires DATABASE_URL', () => {
    expect(() => loadConfig({})).toThrow(/DATABASE_URL: is required/);
  });
});
