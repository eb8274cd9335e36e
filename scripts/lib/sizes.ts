/**
 * Size lists for benchmark options (`--sizes 100k,1M,4M`, `--cases 100k,1M`): a number with an
 * optional k (thousand) or M (million) suffix, comma-separated.
 */

/** One parsed size: the count and the label it was given as (for output keyed by size). */
export interface BenchSize {
  label: string;
  n: number;
}

const FACTOR: Record<string, number> = { '': 1, k: 1_000, K: 1_000, m: 1_000_000, M: 1_000_000 };

/**
 * Parses `100k,1M,2.5M,40000` into sizes; throws naming the bad item and the accepted form.
 * Underscores may group digits (`25_000`).
 */
export function parseSizes(text: string, option: string): BenchSize[] {
  const items = text
    .split(',')
    .map((s) => s.trim())
    .filter(Boolean);
  if (!items.length) throw new Error(`--${option}: give one or more sizes, e.g. --${option} 100k,1M`);
  return items.map((label) => {
    const m = /^(\d+(?:_\d+)*(?:\.\d+)?)([kKmM]?)$/.exec(label);
    const base = m ? Number(m[1].replace(/_/g, '')) : NaN;
    const n = Math.round(base * FACTOR[m?.[2] ?? '']);
    if (!m || !Number.isFinite(n) || n <= 0)
      throw new Error(`--${option}: "${label}" is not a size; write a positive number with an optional k or M suffix, e.g. 100k, 1M, 2.5M or 40000`);
    return { label, n };
  });
}

/** The value of `--name` on the command line, or undefined when absent. */
export function optionText(name: string, argv: readonly string[] = process.argv): string | undefined {
  const i = argv.indexOf(`--${name}`);
  return i >= 0 && i + 1 < argv.length ? argv[i + 1] : undefined;
}
