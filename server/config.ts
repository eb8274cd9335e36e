/**
 * Server and worker configuration, read from the environment once at start-up and
 * validated with zod so a wrong setting stops the process with a clear message.
 */
import { isIP } from 'node:net';
import path from 'node:path';
import { z } from 'zod';

/** Express's names for address ranges it can trust as proxies. */
const PROXY_RANGE_NAMES = ['loopback', 'linklocal', 'uniquelocal'];

/** True for an IPv4/IPv6 address, optionally with a /prefix, or one of Express's range names. */
function isProxyEntry(entry: string): boolean {
  if (PROXY_RANGE_NAMES.includes(entry)) return true;
  const [addr, prefix, ...extra] = entry.split('/');
  const family = isIP(addr);
  if (!family || extra.length) return false;
  if (prefix === undefined) return true;
  if (!/^\d{1,3}$/.test(prefix)) return false;
  return Number(prefix) <= (family === 4 ? 32 : 128);
}

/**
 * The proxies whose X-Forwarded-For is believed: a comma-separated list of addresses, CIDR
 * ranges or Express's names (loopback, linklocal, uniquelocal). Unset means no proxy, so
 * the socket address counts and a client cannot choose its own address for the sign-in
 * throttle. Hop counts and "true" are refused: they trust whatever any client sends.
 */
const TrustProxySchema = z
  .string()
  .optional()
  .transform((v) =>
    (v ?? '')
      .split(',')
      .map((e) => e.trim())
      .filter(Boolean),
  )
  .refine((list) => list.every(isProxyEntry), {
    message:
      'must name the proxies to trust: addresses or CIDR ranges separated by commas (e.g. 10.0.0.5 or 10.0.0.0/24), or loopback, linklocal, uniquelocal; leave it unset when clients connect directly',
  })
  .transform((list): string[] | false => (list.length ? list : false));

const ConfigSchema = z.object({
  DATABASE_URL: z
    .string({ error: 'is required, e.g. postgres://plumbline:…@127.0.0.1:54329/plumbline' })
    .regex(/^postgres(ql)?:\/\//, 'must be a postgres:// connection string'),
  PORT: z.coerce.number().int().min(1).max(65535).default(8080),
  HOST: z.string().default('127.0.0.1'),
  SMTP_HOST: z.string().default('127.0.0.1'),
  SMTP_PORT: z.coerce.number().int().min(1).max(65535).default(1025),
  MAIL_FROM: z.string().default('Aldermere Revenue Office <examinations@revenue.aldermere.example>'),
  SESSION_SECRET: z.string().min(16, 'must be at least 16 characters').default('plumbline-local-development-secret'),
  /** Idle time after which a session ends (rolling: each request restarts the clock). */
  SESSION_TTL_SECONDS: z.coerce
    .number()
    .int()
    .min(1)
    .default(8 * 60 * 60),
  WEB_DIST: z.string().default(path.resolve(__dirname, '..', 'dist')),
  PUBLIC_URL: z.string().url('must be a full URL such as http://127.0.0.1:8080').optional(),
  NODE_ENV: z.enum(['development', 'test', 'production']).default('development'),
  /** Largest file a batch upload may contain, in MB (intake, issue 4). */
  BATCH_MAX_FILE_MB: z.coerce.number().positive('must be a positive number of megabytes').default(100),
  /** Proxies trusted for X-Forwarded-For (see TrustProxySchema); unset: none. */
  TRUST_PROXY: TrustProxySchema,
  /**
   * Server processes sharing the port (node:cluster, server/cluster.ts); 1 is one process
   * without a primary. Each process has its own database connections.
   */
  WEB_CONCURRENCY: z.coerce
    .number({ error: 'must be a whole number of server processes, e.g. 2' })
    .int('must be a whole number of server processes, e.g. 2')
    .min(1, 'must be at least 1')
    .max(32, 'must be at most 32 (each process holds its own database connections)')
    .default(1),
  /** Most data rows in one batch file or sheet; the default is what one Excel sheet holds under its header. */
  BATCH_MAX_ROWS: z.coerce.number().int().positive('must be a positive whole number').default(1_048_575),
});

/** Validated settings. */
export type Config = z.infer<typeof ConfigSchema> & { publicUrl: string };

/** Thrown when the environment does not describe a usable configuration. */
export class ConfigError extends Error {}

/**
 * Reads and checks the configuration; lists every problem at once.
 * @throws ConfigError naming each variable, what is wrong and how to fix it.
 */
export function loadConfig(env: Record<string, string | undefined> = process.env): Config {
  const parsed = ConfigSchema.safeParse(env);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join('.') || '(env)'}: ${i.message}`);
    throw new ConfigError(`Configuration is not valid:\n${lines.join('\n')}\nSet these environment variables and start again.`);
  }
  const c = parsed.data;
  return { ...c, publicUrl: c.PUBLIC_URL ?? `http://${c.HOST}:${c.PORT}` };
}
