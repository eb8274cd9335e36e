/**
 * `npm run bench:bundle [-- --json] [--dir DIR] [--top N]`
 *
 * The size of the web app's JavaScript as a browser fetches it: every `.js` file of the web
 * build (dist/, remade first when older than its sources, as `npm start` does; or DIR, taken
 * as it is), each gzipped in memory at zlib's default level 6, the level of Express's
 * `compression` and of nginx's gzip_comp_level setting most servers use. Prints the total,
 * the part index.html loads before any screen (its script tags), the part loaded only when a
 * screen is first visited (async routes, docs/design.md#web-bundle), and the N largest files
 * (default 8). Aim (issue 16): at most 450 KB gzipped in all. Source maps are not counted.
 *
 * `--json` prints the figures as one JSON object on the last line:
 * `{gzipKb, initialGzipKb, rawKb, files: [{file, gzipKb, rawKb, initial}]}` (KB = 1024 bytes,
 * largest first). A benchmark, not a test: it measures and prints, it does not fail.
 */
import fs from 'node:fs';
import path from 'node:path';
import { gzipSync } from 'node:zlib';
import { distDir, ensureWebBuild } from './lib/web-build';

function arg(name: string): string | undefined {
  const i = process.argv.indexOf(`--${name}`);
  return i >= 0 && i + 1 < process.argv.length ? process.argv[i + 1] : undefined;
}
const json = process.argv.includes('--json');
const top = Number(arg('top') ?? 8);
if (!Number.isInteger(top) || top < 0) {
  process.stderr.write('bench-bundle: --top must be a whole number of files, e.g. --top 8\n');
  process.exit(2);
}

const dirArg = arg('dir');
const dir = dirArg ? path.resolve(dirArg) : distDir;
if (dirArg) {
  if (!fs.existsSync(path.join(dir, 'index.html'))) {
    process.stderr.write(`bench-bundle: ${dir} holds no index.html; give --dir the output folder of \`expo export\` (or leave it out to measure dist/)\n`);
    process.exit(2);
  }
} else {
  ensureWebBuild((m) => process.stderr.write(`${m}\n`));
}

function jsFiles(d: string, out: string[] = []): string[] {
  for (const e of fs.readdirSync(d, { withFileTypes: true })) {
    const p = path.join(d, e.name);
    if (e.isDirectory()) jsFiles(p, out);
    else if (e.name.endsWith('.js')) out.push(p);
  }
  return out;
}

// The scripts index.html names are fetched before anything shows; the rest wait for a screen.
const html = fs.readFileSync(path.join(dir, 'index.html'), 'utf8');
const initialSrc = new Set([...html.matchAll(/<script[^>]*\bsrc="([^"]+)"/g)].map((m) => m[1].replace(/^\//, '')));

const kb = (bytes: number) => Math.round((bytes / 1024) * 10) / 10;
const files = jsFiles(dir)
  .map((p) => {
    const body = fs.readFileSync(p);
    const file = path.relative(dir, p).split(path.sep).join('/');
    return { file, rawBytes: body.length, gzipBytes: gzipSync(body).length, initial: initialSrc.has(file) };
  })
  .sort((a, b) => b.gzipBytes - a.gzipBytes);
if (files.length === 0) {
  process.stderr.write(`bench-bundle: no .js files under ${dir}; was the build interrupted? Run \`npm run build:web\`.\n`);
  process.exit(2);
}

const sum = (xs: typeof files, key: 'rawBytes' | 'gzipBytes') => xs.reduce((s, f) => s + f[key], 0);
const initial = files.filter((f) => f.initial);
const later = files.filter((f) => !f.initial);

console.log(`web bundle in ${path.relative(process.cwd(), dir) || '.'}: ${files.length} JavaScript files`);
console.log(`  all JavaScript     ${kb(sum(files, 'gzipBytes')).toFixed(1).padStart(7)} KB gzipped  (${kb(sum(files, 'rawBytes')).toFixed(1)} KB raw)`);
console.log(`  loaded by the page ${kb(sum(initial, 'gzipBytes')).toFixed(1).padStart(7)} KB gzipped  (${initial.length} files)`);
console.log(`  loaded per screen  ${kb(sum(later, 'gzipBytes')).toFixed(1).padStart(7)} KB gzipped  (${later.length} files, each when first needed)`);
if (top > 0) {
  console.log(`largest files (gzipped KB, raw KB):`);
  for (const f of files.slice(0, top)) {
    console.log(`  ${kb(f.gzipBytes).toFixed(1).padStart(7)} ${kb(f.rawBytes).toFixed(1).padStart(8)}  ${f.file}${f.initial ? '  (page)' : ''}`);
  }
}
if (json) {
  console.log(
    JSON.stringify({
      gzipKb: kb(sum(files, 'gzipBytes')),
      initialGzipKb: kb(sum(initial, 'gzipBytes')),
      rawKb: kb(sum(files, 'rawBytes')),
      files: files.map((f) => ({ file: f.file, gzipKb: kb(f.gzipBytes), rawKb: kb(f.rawBytes), initial: f.initial })),
    }),
  );
}
