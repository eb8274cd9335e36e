/**
 * `npm run demo:generate -- [--out DIR] [--seed S] [--returns N] [--plant-share 0.05] [--format csv|xlsx|both]`
 *
 * Writes an Aldermere demo batch (fictional county, invented names and figures) as a clerk
 * would upload it: returns.csv, line_items.csv and statements.csv, and/or one workbook
 * aldermere-batch.xlsx; plus answers.json and answers.csv listing every planted return and
 * what was done to it. The answers are never inside the batch files. Same seed, same files.
 */
import path from 'node:path';
import { DEMO_YEARS, PLANT_KINDS } from '../shared/demo/aldermere';
import { writeAnswers, writeCsvBatch, writeXlsxBatch } from '../server/seed/batch-files';

function option(name: string): string | undefined {
  const i = process.argv.indexOf(`--${name}`);
  return i >= 0 ? process.argv[i + 1] : undefined;
}

async function main(): Promise<number> {
  const out = path.resolve(option('out') ?? 'demo-batch');
  const seed = option('seed') ?? 'aldermere-demo';
  const returns = Number(option('returns') ?? 3000);
  const plantShare = Number(option('plant-share') ?? 0.05);
  const format = option('format') ?? 'both';
  const years = option('years')?.split(',').map(Number) ?? [...DEMO_YEARS];
  if (!Number.isInteger(returns) || returns < 1) throw new Error('--returns must be a whole number of returns, e.g. 3000');
  if (!(plantShare >= 0 && plantShare <= 1)) throw new Error('--plant-share must be between 0 and 1, e.g. 0.05');
  if (!['csv', 'xlsx', 'both'].includes(format)) throw new Error('--format must be csv, xlsx or both');
  const opts = { seed, returns, plantShare, years };
  let labels;
  if (format !== 'xlsx') labels = (await writeCsvBatch(out, opts)).labels;
  if (format !== 'csv') labels = (await writeXlsxBatch(path.join(out, 'aldermere-batch.xlsx'), opts)).labels;
  const answers = writeAnswers(out, opts, labels!);
  const byKind = new Map<string, number>();
  for (const l of labels!) for (const k of l.kinds) byKind.set(k, (byKind.get(k) ?? 0) + 1);
  console.log(`Wrote ${returns} returns (seed ${JSON.stringify(seed)}, years ${years.join(', ')}) to ${out}`);
  console.log(`${labels!.length} planted returns (${((labels!.length / returns) * 100).toFixed(1)} %), listed in ${path.basename(answers.json)} and ${path.basename(answers.csv)}:`);
  for (const [k, n] of [...byKind].sort((a, b) => b[1] - a[1])) console.log(`  ${k.padEnd(26)} ${String(n).padStart(5)}  ${PLANT_KINDS[k as keyof typeof PLANT_KINDS]}`);
  return 0;
}

main().then(
  (code) => process.exit(code),
  (e) => {
    console.error(`demo:generate: ${e instanceof Error ? e.message : String(e)}`);
    process.exit(1);
  },
);
