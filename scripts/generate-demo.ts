/**
 * `npm run demo:generate -- [--out DIR] [--seed S] [--returns N] [--plant-share 0.05] [--format csv|xlsx|both]
 *                           [--habit-share whole-units=0.25,recurring=0.3,...] [--habits off]`
 *
 * Writes an Aldermere demo batch (fictional county, invented names and figures) as a clerk
 * would upload it: returns.csv, line_items.csv and statements.csv, and/or one workbook
 * aldermere-batch.xlsx; plus answers.json and answers.csv listing every return's planted
 * kinds (none for a typical return) and its habits. The answers are never inside the batch
 * files. Same seed and options, same files.
 *
 * Habits of typical filers are on by default at DEFAULT_HABIT_SHARES (shares of taxpayers);
 * `--habit-share` changes some of them (names: whole-units, recurring, large-firm, zero-tax,
 * gifts, retirement), `--habits off` gives the idealised batch without them.
 */
import path from 'node:path';
import { DEFAULT_HABIT_SHARES, DEMO_YEARS, HABIT_KINDS, NO_HABITS, parseHabitShares, PLANT_KINDS, type HabitKind } from '../shared/demo/aldermere';
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
  const habitsFlag = option('habits');
  if (habitsFlag !== undefined && !['on', 'off'].includes(habitsFlag)) throw new Error('--habits must be on or off');
  let habits = habitsFlag === 'off' ? NO_HABITS : DEFAULT_HABIT_SHARES;
  const shareText = option('habit-share');
  if (shareText !== undefined) habits = parseHabitShares(shareText, habits);
  const opts = { seed, returns, plantShare, years, habits };
  let written;
  if (format !== 'xlsx') written = await writeCsvBatch(out, opts);
  if (format !== 'csv') written = await writeXlsxBatch(path.join(out, 'aldermere-batch.xlsx'), opts);
  const { labels, answers: all } = written!;
  const answers = writeAnswers(out, opts, all);
  const byKind = new Map<string, number>();
  for (const l of labels) for (const k of l.kinds) byKind.set(k, (byKind.get(k) ?? 0) + 1);
  console.log(`Wrote ${returns} returns (seed ${JSON.stringify(seed)}, years ${years.join(', ')}) to ${out}`);
  console.log(
    `${labels.length} planted returns (${((labels.length / returns) * 100).toFixed(1)} %), listed with every return's habits in ${path.basename(answers.json)} and ${path.basename(answers.csv)}:`,
  );
  for (const [k, n] of [...byKind].sort((a, b) => b[1] - a[1]))
    console.log(`  ${k.padEnd(26)} ${String(n).padStart(5)}  ${PLANT_KINDS[k as keyof typeof PLANT_KINDS]}`);
  const taxpayers = new Set(all.map((a) => a.tin)).size;
  console.log(`Habits of typical filers (share of ${taxpayers} taxpayers set → returns showing it):`);
  for (const h of Object.keys(HABIT_KINDS) as HabitKind[]) {
    const n = all.filter((a) => a.habits.includes(h)).length;
    console.log(`  ${h.padEnd(26)} ${habits[h].toFixed(2).padStart(5)} → ${String(n).padStart(5)}  ${HABIT_KINDS[h]}`);
  }
  return 0;
}

main().then(
  (code) => process.exit(code),
  (e) => {
    console.error(`demo:generate: ${e instanceof Error ? e.message : String(e)}`);
    process.exit(1);
  },
);
