/**
 * Builds the web app with `expo export` when the build is missing or older than any
 * source it is made from.
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { projectRoot } from './local-services';

const SOURCES = ['app', 'components', 'hooks', 'shared', 'assets', 'fonts', 'app.json', 'package.json', 'babel.config.js'];
export const distDir = path.join(projectRoot, 'dist');
const stamp = path.join(distDir, 'index.html');

function newestMtime(p: string): number {
  if (!fs.existsSync(p)) return 0;
  const st = fs.statSync(p);
  if (!st.isDirectory()) return st.mtimeMs;
  let newest = st.mtimeMs;
  for (const e of fs.readdirSync(p)) newest = Math.max(newest, newestMtime(path.join(p, e)));
  return newest;
}

/** True when dist/ is missing or older than its sources. */
export function webBuildIsStale(): boolean {
  if (!fs.existsSync(stamp)) return true;
  const built = fs.statSync(stamp).mtimeMs;
  return SOURCES.some((s) => newestMtime(path.join(projectRoot, s)) > built);
}

/** Builds when stale; throws with the build's output when it fails. */
export function ensureWebBuild(log: (m: string) => void = console.log): void {
  if (!webBuildIsStale()) {
    log('Web build is up to date.');
    return;
  }
  log('Building the web app (expo export, about a minute the first time)…');
  const t0 = Date.now();
  const r = spawnSync(path.join(projectRoot, 'node_modules', '.bin', 'expo'), ['export', '--platform', 'web', '--output-dir', 'dist'], {
    cwd: projectRoot,
    encoding: 'utf8',
    env: { ...process.env, CI: '1', EXPO_NO_TELEMETRY: '1', EXPO_OFFLINE: '1' },
    maxBuffer: 64 * 1024 * 1024,
  });
  if (r.status !== 0 || !fs.existsSync(stamp)) {
    throw new Error(`The web build failed (exit ${r.status}):\n${(r.stdout + r.stderr).split('\n').slice(-40).join('\n')}`);
  }
  // expo export keeps file times; touch the stamp so staleness is judged from now.
  const now = new Date();
  fs.utimesSync(stamp, now, now);
  log(`Web build done in ${Math.round((Date.now() - t0) / 1000)} s.`);
}
