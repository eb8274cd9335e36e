/**
 * Every pointer to documentation stays inside the repository (docs/design.md, the
 * introduction): a newcomer with a fresh clone must be able to follow each one.
 *
 * - Every `.md` file named in a markdown file, and every one named in a source file (code
 *   comments, test names) by a path (`docs/methods.md`) or an upper-case name
 *   (`README.md`), exists, from the repository root or from the naming file's folder.
 *   Lower-case bare names in code are left alone: `space.md` there is a theme value.
 * - A `file.md#anchor` names a heading of that file (GitHub's heading ids); a bare
 *   `(#anchor)` link in a markdown file names one of its own headings.
 * - A `file.md "Heading"` (or `file.md, "Heading"`) names the start of one of its headings.
 * - A repository path in backticks in the project's own documents (README.md,
 *   DEVELOPERS.md, docs/) names a file that exists, so a renamed module cannot leave the
 *   docs pointing at nothing (paths with placeholders such as `<name>` are patterns, skipped).
 */
import fs from 'node:fs';
import path from 'node:path';

const root = path.resolve(__dirname, '../..');

/** Folders that are not the project's own text: dependencies, builds, data, screenshots. */
const SKIP = new Set(['node_modules', 'dist', '.git', '.pg', '.pg-test', '.data', '.expo', 'bench-output', 'screenshots', 'coverage']);
const SOURCE = /\.(ts|tsx|js|mjs|cjs)$/;

function walk(dir: string, out: string[] = []): string[] {
  for (const e of fs.readdirSync(dir, { withFileTypes: true })) {
    if (SKIP.has(e.name)) continue;
    const p = path.join(dir, e.name);
    if (e.isDirectory()) walk(p, out);
    else if (SOURCE.test(e.name) || e.name.endsWith('.md')) out.push(p);
  }
  return out;
}

/** GitHub's id for a heading: lower case, punctuation dropped, spaces as hyphens. */
export function headingId(text: string): string {
  return text
    .trim()
    .toLowerCase()
    .replace(/[`*_]/g, '')
    .replace(/[^\p{L}\p{N} -]/gu, '')
    .replace(/ /g, '-');
}

const headingCache = new Map<string, string[]>();
/** The headings of a markdown file (outside fenced code). */
function headingsOf(file: string): string[] {
  const hit = headingCache.get(file);
  if (hit) return hit;
  const found: string[] = [];
  let fenced = false;
  for (const line of fs.readFileSync(file, 'utf8').split('\n')) {
    if (/^\s*```/.test(line)) fenced = !fenced;
    else if (!fenced) {
      const m = /^#{1,6}\s+(.*?)\s*#*\s*$/.exec(line);
      if (m) found.push(m[1]);
    }
  }
  headingCache.set(file, found);
  return found;
}

/** Where a named .md file is: from the root, else from the naming file's folder. */
function resolveDoc(name: string, from: string): string | null {
  for (const base of [root, path.dirname(from)]) {
    const p = path.resolve(base, name);
    if (p.startsWith(root) && fs.existsSync(p) && fs.statSync(p).isFile()) return p;
  }
  return null;
}

// `[\w.-]*\.md` preceded by nothing path-like; optional `#anchor`; optional quoted heading.
const MD_REF = /(?<![\w/.@-])((?:[\w.-]+\/)*[\w.-]+\.md)(?![\w])(#[\w-]+)?(?:,?\s+"([^"\n]+)")?/g;
const SELF_ANCHOR = /\]\((#[\w-]+)\)/g;
// `a/b.ts`, `shared/digits/` … in backticks: at least one slash, a known extension, no placeholders.
const CODE_PATH = /`((?:[\w.-]+\/)+[\w.-]+\.(?:ts|tsx|js|json|md))`/g;
const PROJECT_DOCS = ['README.md', 'DEVELOPERS.md', 'docs'];

interface Problem {
  file: string;
  line: number;
  problem: string;
}

function lineOf(text: string, index: number): number {
  return text.slice(0, index).split('\n').length;
}

function check(): Problem[] {
  const problems: Problem[] = [];
  for (const file of walk(root)) {
    const text = fs.readFileSync(file, 'utf8');
    const rel = path.relative(root, file);
    const isMarkdown = file.endsWith('.md');
    for (const m of text.matchAll(MD_REF)) {
      const [, name, anchor, quoted] = m;
      if (!isMarkdown && !name.includes('/') && !/^[A-Z][A-Z0-9_-]*\.md$/.test(name)) continue;
      const at = { file: rel, line: lineOf(text, m.index ?? 0) };
      const target = resolveDoc(name, file);
      if (!target) {
        problems.push({ ...at, problem: `names ${name}, which is not in the repository` });
        continue;
      }
      if (anchor) {
        const ids = headingsOf(target).map(headingId);
        if (!ids.includes(anchor.slice(1))) problems.push({ ...at, problem: `${name}${anchor}: no such heading (headings: ${ids.join(', ')})` });
      }
      if (quoted && !anchor) {
        const q = quoted.trim().toLowerCase();
        if (!headingsOf(target).some((h) => h.toLowerCase().startsWith(q))) problems.push({ ...at, problem: `${name} "${quoted}": no heading starts so` });
      }
    }
    if (isMarkdown && PROJECT_DOCS.some((d) => rel === d || rel.startsWith(`${d}/`))) {
      for (const m of text.matchAll(CODE_PATH)) {
        if (!resolveDoc(m[1], file)) problems.push({ file: rel, line: lineOf(text, m.index ?? 0), problem: `names ${m[1]}, which is not in the repository` });
      }
    }
    if (file.endsWith('.md')) {
      const ids = headingsOf(file).map(headingId);
      for (const m of text.matchAll(SELF_ANCHOR)) {
        if (!ids.includes(m[1].slice(1))) problems.push({ file: rel, line: lineOf(text, m.index ?? 0), problem: `link ${m[1]}: no such heading in this file` });
      }
    }
  }
  return problems;
}

describe('documentation pointers stay inside the repository', () => {
  it('makes heading ids the way GitHub does', () => {
    expect(headingId('Line codes and tax rules')).toBe('line-codes-and-tax-rules');
    expect(headingId('Known-conforming sequences')).toBe('known-conforming-sequences');
    expect(headingId("Aldermere's rules (invented)")).toBe('aldermeres-rules-invented');
    expect(headingId('`npm start`: what it does')).toBe('npm-start-what-it-does');
  });

  it('the design and methods documents exist with their main sections', () => {
    const design = headingsOf(path.join(root, 'docs/design.md')).map(headingId);
    for (const id of ['roles', 'case-states', 'batch-states', 'data-model', 'batch-files', 'api-contract']) expect(design).toContain(id);
    const methods = headingsOf(path.join(root, 'docs/methods.md')).map(headingId);
    for (const id of ['which-amounts-each-test-takes', 'expected-proportions', 'conformity-figures', 'small-samples', 'risk-factors', 'scoring-components'])
      expect(methods).toContain(id);
  });

  it('catches a missing file, a missing heading and a quoted heading that does not exist', () => {
    // Names built from parts, so this file itself names nothing missing.
    const missing = ['NOTES', 'md'].join('.');
    const q = '"';
    const probe = `see ${missing}; see docs/design.md${'#'}no-such-part; see docs/methods.md, ${q}Nowhere${q}`;
    const found = [...probe.matchAll(MD_REF)].map((m) => [m[1], m[2] ?? null, m[3] ?? null]);
    expect(found).toEqual([
      [missing, null, null],
      ['docs/design.md', '#no-such-part', null],
      ['docs/methods.md', null, 'Nowhere'],
    ]);
    expect(resolveDoc(missing, path.join(root, 'README.md'))).toBeNull();
    expect(headingsOf(path.join(root, 'docs/design.md')).map(headingId)).not.toContain('no-such-part');
  });

  it('every .md file, section and heading named in code and docs is in the repository', () => {
    const problems = check();
    expect(problems.map((p) => `${p.file}:${p.line} ${p.problem}`)).toEqual([]);
  });
});
