/**
 * Child processes started by the start and test commands, with prefixed output and a
 * clean stop: SIGTERM, then SIGKILL after a grace period.
 */
import { spawn, type ChildProcess, type SpawnOptions } from 'node:child_process';
import net from 'node:net';
import path from 'node:path';
import { projectRoot } from './local-services';

/** A started child with its label. */
export interface Managed {
  name: string;
  child: ChildProcess;
  exited: Promise<number | null>;
}

const COLOURS = ['\x1b[36m', '\x1b[35m', '\x1b[33m', '\x1b[32m'];

/** Starts a child process whose output lines are prefixed with its name. */
export function startProcess(name: string, cmd: string, args: string[], opts: SpawnOptions & { quiet?: boolean } = {}): Managed {
  const child = spawn(cmd, args, { cwd: projectRoot, stdio: ['ignore', 'pipe', 'pipe'], ...opts });
  const colour = COLOURS[name.length % COLOURS.length];
  const prefix = process.stdout.isTTY ? `${colour}${name.padEnd(7)}\x1b[0m│ ` : `${name.padEnd(7)}| `;
  const pipe = (stream: NodeJS.ReadableStream | null, out: NodeJS.WriteStream) => {
    if (!stream) return;
    let buf = '';
    stream.on('data', (d: Buffer) => {
      buf += d.toString();
      let i;
      while ((i = buf.indexOf('\n')) >= 0) {
        if (!opts.quiet) out.write(prefix + buf.slice(0, i) + '\n');
        buf = buf.slice(i + 1);
      }
    });
  };
  pipe(child.stdout, process.stdout);
  pipe(child.stderr, process.stderr);
  const exited = new Promise<number | null>((resolve) => child.on('exit', (code) => resolve(code)));
  return { name, child, exited };
}

/** Stops a child: SIGTERM, then SIGKILL after `graceMs`. */
export async function stopProcess(m: Managed, graceMs = 8000): Promise<void> {
  if (m.child.exitCode !== null || m.child.signalCode !== null) return;
  m.child.kill('SIGTERM');
  const timer = setTimeout(() => m.child.kill('SIGKILL'), graceMs);
  await m.exited;
  clearTimeout(timer);
}

/** Resolves when something accepts TCP connections on host:port. */
export async function waitForPort(port: number, host = '127.0.0.1', timeoutMs = 30_000): Promise<void> {
  const until = Date.now() + timeoutMs;
  while (Date.now() < until) {
    const ok = await new Promise<boolean>((resolve) => {
      const s = net.connect(port, host);
      s.once('connect', () => {
        s.destroy();
        resolve(true);
      });
      s.once('error', () => resolve(false));
    });
    if (ok) return;
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`nothing answered on ${host}:${port} within ${timeoutMs / 1000} s`);
}

/** True if the port is free to listen on. */
export function isPortFree(port: number, host = '127.0.0.1'): Promise<boolean> {
  return new Promise((resolve) => {
    const srv = net.createServer();
    srv.once('error', () => resolve(false));
    srv.listen(port, host, () => srv.close(() => resolve(true)));
  });
}

/**
 * Runs a TypeScript entry point as one node process (`node --import tsx`): never npx (no
 * network, no prompts), and no tsx wrapper process between us and the program.
 */
export function tsxArgs(entry: string): [string, string[]] {
  return [process.execPath, ['--import', 'tsx', entry]];
}

/** Starts MailDev on loopback (ESM-only package: run its bin with node). */
export function startMaildev(smtpPort: number, webPort: number, mailDir: string, quiet = false): Managed {
  return startProcess(
    'mail',
    process.execPath,
    [
      path.join(projectRoot, 'node_modules', 'maildev', 'dist', 'bin', 'maildev.js'),
      '--ip',
      '127.0.0.1',
      '--web-ip',
      '127.0.0.1',
      '--smtp',
      String(smtpPort),
      '--web',
      String(webPort),
      '--mail-directory',
      mailDir,
      '--silent',
    ],
    { quiet },
  );
}
