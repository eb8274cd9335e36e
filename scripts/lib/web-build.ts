/**
 * Builds the web app with `expo export` when the build is missing or older than any
 * source it is made from. The export goes into a folder of its own and is moved into place
 * when whole: `expo export` empties its output folder first, and another run in the same
 * checkout (a server of `npm start` or of the browser tests) may be serving dist/ meanwhile.
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { projectRoot } from './local-services';

const SOURCES = ['app', 'components', 'hooks', 'shared', 'web', 'assets', 'fonts', 'app.json', 'package.json', 'babel.config.js', 'metro.config.js'];
export const distDir = path.join(projectRoot, 'dist');
const stamp = path.join(distDir, 'index.html');
/** Where builds are made before they replace dist/ (gitignored; the same file system, so a rename moves them). */
const buildsDir = path.join(projectRoot, 'web-build');

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
  fs.mkdirSync(buildsDir, { recursive: true });
  const next = path.join(buildsDir, `next-${process.pid}`);
  try {
    const r = spawnSync(path.join(projectRoot, 'node_modules', '.bin', 'expo'), ['export', '--platform', 'web', '--output-dir', next], {
      cwd: projectRoot,
      encoding: 'utf8',
      env: { ...process.env, CI: '1', EXPO_NO_TELEMETRY: '1', EXPO_OFFLINE: '1' },
      maxBuffer: 64 * 1024 * 1024,
    });
    const nextStamp = path.join(next, 'index.html');
    if (r.status !== 0 || !fs.existsSync(nextStamp)) {
      throw new Error(`The web build failed (exit ${r.status}):\n${(r.stdout + r.stderr).split('\n').slice(-40).join('\n')}`);
    }
    // expo export keeps file times; touch the stamp so staleness is judged from now.
    const now = new Date();
    fs.utimesSync(nextStamp, now, now);
    replaceDist(next);
  } finally {
    fs.rmSync(next, { recursive: true, force: true });
  }
  log(`Web build done in ${Math.round((Date.now() - t0) / 1000)} s.`);
}

/**
 * Puts the finished build `next` in dist/'s place with two renames (a folder cannot be renamed
 * over a non-empty one), so dist/ is missing only between them, never half-written. Another
 * run may swap in its own build at the same moment: whichever lands last stays, both whole.
 */
function replaceDist(next: string): void {
  const old = path.join(buildsDir, `old-${process.pid}`);
  for (let attempt = 1; ; attempt++) {
    try {
      fs.renameSync(distDir, old);
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code !== 'ENOENT') throw e; // no dist/ yet, or another run moved it just now
    }
    try {
      fs.renameSync(next, distDir);
      break;
    } catch (e) {
      // Another run put its dist/ in place between the two renames: move that one aside too.
      const code = (e as NodeJS.ErrnoException).code;
      if (attempt >= 5 || (code !== 'ENOTEMPTY' && code !== 'EEXIST')) throw e;
    } finally {
      fs.rmSync(old, { recursive: true, force: true });
    }
  }
}
