/**
 * `npm run bench:ranking [-- --returns 4000 --tuning-seeds rank-a,rank-b --held-out-seeds rank-c,rank-d
 *                          --habits both|on|off --habit-share whole-units=0.25,... --typical-seed rank-typical
 *                          --typical-returns 4000 --typical on|off --json --dump rows.jsonl]`
 *
 * Ranking quality on labelled Aldermere batches: each batch is generated with its answer
 * list kept apart, loaded through the intake service into a fresh database, scored by the
 * scoring service under the active profile, and then measured against the answers.
 *
 * Conditions: typical filers with their real habits (issue 10; DEFAULT_HABIT_SHARES or
 * --habit-share) and without them (the idealised batch), each on the tuning seeds and on
 * held-out seeds that must not be used for tuning. For the blended score of each:
 *   precision at k (k = number of plants): share of the top k that are plants;
 *   typical returns selected: share of unplanted returns at or above the profile's cut
 *     (the breakdown's `selected`);
 *   selected per habit: the same share among unplanted returns showing each habit;
 *   recall in the top 10 % and ROC AUC (chance a random plant outranks a random typical
 *     return, ties half; Mann–Whitney U / (n_plants × n_typical), Hanley & McNeil 1982,
 *     Radiology);
 * precision at k also for the digit components alone and the rule factors alone, and per
 * plant kind the share in the top k and the share selected. Then a purely typical batch (no
 * plants, habits on): the share of returns whose pattern q-value (breakdown.pattern.q, the
 * batch's Benjamini–Hochberg q) is below 0.05 ("n/a" on profiles that do not store it).
 *
 * `--json` prints the figures as one JSON object on the last line. A benchmark: it prints,
 * it does not fail.
 */
import fs from 'node:fs';
import path from 'node:path';
import { ingestUpload } from '../server/batches/batch.service';
import { scoreBatchNow } from '../server/scoring/scoring.service';
import { writeCsvBatch } from '../server/seed/batch-files';
import { HABIT_KINDS, NO_HABITS, parseHabitShares, type HabitKind, type HabitShares } from '../shared/demo/aldermere';
import { DEFAULT_INTAKE_LIMITS } from '../shared/returns/batch-rows';
import type { ComponentResult } from '../shared/scoring/breakdown';
import type { ComponentKey } from '../shared/scoring/settings';
import { freshBenchDb, releaseBenchCluster } from './lib/bench-db';
import { projectRoot, startSetup } from './lib/local-services';
import { connectionString } from './lib/pg';

/** This run's own database, so two runs at once (several people share the machine) do not drop each other's. */
const DB_NAME = `plumbline_bench_ranking_${process.pid}`;

async function dropBenchDb(): Promise<void> {
  const { Client } = await import('pg');
  const c = new Client({ connectionString: connectionString(startSetup.cluster, 'postgres') });
  await c.connect();
  try {
    await c.query(`DROP DATABASE IF EXISTS "${DB_NAME}"`);
  } finally {
    await c.end();
  }
}

function arg(name: string, dflt: string): string {
  const i = process.argv.indexOf(`--${name}`);
  return i >= 0 && i + 1 < process.argv.length ? process.argv[i + 1] : dflt;
}
const flag = (name: string) => process.argv.includes(`--${name}`);
const list = (s: string) =>
  s
    .split(',')
    .map((x) => x.trim())
    .filter(Boolean);

const DIGIT_KEYS: ComponentKey[] = ['digits', 'historyDigits', 'preparerDigits'];
const HABITS = Object.keys(HABIT_KINDS) as HabitKind[];
/** The q-value below which a return's pattern evidence counts as a discovery. */
const Q_LEVEL = 0.05;

interface Row {
  ref: string;
  planted: boolean;
  kinds: string[];
  habits: HabitKind[];
  total: number;
  digits: number;
  rules: number;
  selected: boolean;
  /** breakdown.pattern.q, or null when the profile does not store it. */
  q: number | null;
  /** The return's preparer (null: self-prepared), for `--dump`. */
  preparer: string | null;
  /** Points and strength of every component, for `--dump`. */
  parts: Record<string, [number, number]>;
}

/** Precision at k, recall in the top 10 %, ROC AUC for one score. */
export function rankingFigures(rows: Row[], score: (r: Row) => number) {
  // Ties are broken by reference so the order is repeatable (not in the plants' favour).
  const sorted = [...rows].sort((a, b) => score(b) - score(a) || (a.ref < b.ref ? -1 : 1));
  const plants = rows.filter((r) => r.planted).length;
  const typical = rows.length - plants;
  const topK = sorted.slice(0, plants).filter((r) => r.planted).length;
  const tenth = Math.ceil(rows.length / 10);
  const inTenth = sorted.slice(0, tenth).filter((r) => r.planted).length;
  // AUC by ranks with ties averaged.
  const asc = [...rows].sort((a, b) => score(a) - score(b));
  let rankSum = 0;
  for (let i = 0; i < asc.length;) {
    let j = i;
    while (j + 1 < asc.length && score(asc[j + 1]) === score(asc[i])) j++;
    const avg = (i + j) / 2 + 1;
    for (let k = i; k <= j; k++) if (asc[k].planted) rankSum += avg;
    i = j + 1;
  }
  const auc = plants && typical ? (rankSum - (plants * (plants + 1)) / 2) / (plants * typical) : NaN;
  return { precisionAtK: plants ? topK / plants : NaN, recallTop10: plants ? inTenth / plants : NaN, auc, k: plants, topSorted: sorted };
}

/** Generates, loads and scores one batch; one row per scored return. */
async function runBatch(seed: string, returns: number, plantShare: number, habits: HabitShares, tag: string): Promise<Row[]> {
  const dir = path.join(projectRoot, 'bench-output', `ranking-${seed}-${returns}-${tag}`);
  const opts = { seed, returns, plantShare, refPrefix: 'RNK', habits };
  const t = performance.now();
  const w = await writeCsvBatch(dir, opts);
  const db = await freshBenchDb(DB_NAME);
  try {
    const size = (f: string) => fs.statSync(f).size;
    const part = (t: 'returns' | 'line_items' | 'statements') => ({ originalName: `${t}.csv`, path: w.files[t]!, size: size(w.files[t]!) });
    const warn = console.warn;
    console.warn = () => undefined;
    const out = await ingestUpload(
      { dataSource: db.ds, boss: null, limits: DEFAULT_INTAKE_LIMITS },
      { format: 'csv', parts: { returns: part('returns'), line_items: part('line_items'), statements: part('statements') } },
      { id: db.clerkId },
    );
    console.warn = warn;
    if (out.kind !== 'accepted') throw new Error(`the generated batch was not accepted: ${JSON.stringify(out).slice(0, 400)}`);
    const batchId = out.batch.id;
    const t0 = performance.now();
    await scoreBatchNow(db.ds, batchId);
    console.log(
      `bench  | ${seed} (${tag}): ${w.counts.returns} returns, ${w.labels.length} planted; generated and loaded in ${((t0 - t) / 1000).toFixed(1)} s, scored in ${((performance.now() - t0) / 1000).toFixed(1)} s`,
    );
    const answers = new Map(w.answers.map((a) => [a.returnRef, a]));
    const rows: {
      return_ref: string;
      components: ComponentResult[] | null;
      risk_score: string | null;
      selected: boolean | null;
      cut: string | null;
      q: string | null;
      preparer_id: string | null;
    }[] = await db.ds.query(
      `SELECT r.return_ref, r.preparer_id, s.risk_score, s.breakdown->'components' AS components, (s.breakdown->>'selected')::boolean AS selected,
              s.breakdown->>'selectionCut' AS cut, s.breakdown->'pattern'->>'q' AS q
         FROM return_score s JOIN tax_return r ON r.id = s.return_id WHERE s.batch_id = $1`,
      [batchId],
    );
    return rows.map((r) => {
      const comps = r.components ?? [];
      const digits = comps.filter((c) => DIGIT_KEYS.includes(c.key)).reduce((s, c) => s + c.points, 0);
      const all = comps.reduce((s, c) => s + c.points, 0);
      const a = answers.get(r.return_ref);
      const total = Number(r.risk_score ?? 0);
      return {
        ref: `${seed}:${r.return_ref}`,
        planted: (a?.kinds.length ?? 0) > 0,
        kinds: a?.kinds ?? [],
        habits: a?.habits ?? [],
        total,
        digits,
        rules: all - digits,
        selected: r.selected ?? (r.cut !== null && total >= Number(r.cut)),
        q: r.q === null ? null : Number(r.q),
        preparer: r.preparer_id,
        parts: Object.fromEntries(comps.map((c) => [c.key, [c.points, c.strength]])),
      };
    });
  } finally {
    await db.close();
    await dropBenchDb();
  }
}

interface RateFigure {
  n: number;
  selected: number;
  rate: number | null;
}
const rate = (rows: Row[]): RateFigure => {
  const selected = rows.filter((r) => r.selected).length;
  return { n: rows.length, selected, rate: rows.length ? selected / rows.length : null };
};

/** The figures of one condition (habits on/off × tuning/held-out seeds). */
function conditionFigures(rows: Row[]) {
  const blended = rankingFigures(rows, (r) => r.total);
  const typical = rows.filter((r) => !r.planted);
  const top = new Set(blended.topSorted.slice(0, blended.k).map((r) => r.ref));
  const perHabit = Object.fromEntries(HABITS.map((h) => [h, rate(typical.filter((r) => r.habits.includes(h)))])) as Record<HabitKind, RateFigure>;
  const perKind: Record<string, { n: number; inTopK: number; selected: number }> = {};
  for (const r of rows.filter((x) => x.planted))
    for (const k of r.kinds) {
      const e = (perKind[k] ??= { n: 0, inTopK: 0, selected: 0 });
      e.n++;
      if (top.has(r.ref)) e.inTopK++;
      if (r.selected) e.selected++;
    }
  const selectedTypical = typical.filter((r) => r.selected);
  return {
    returns: rows.length,
    planted: blended.k,
    precisionAtK: blended.precisionAtK,
    recallTop10: blended.recallTop10,
    auc: blended.auc,
    digitsPrecisionAtK: rankingFigures(rows, (r) => r.digits).precisionAtK,
    rulesPrecisionAtK: rankingFigures(rows, (r) => r.rules).precisionAtK,
    typicalSelected: rate(typical),
    plantsSelected: rate(rows.filter((r) => r.planted)),
    noHabitSelected: rate(typical.filter((r) => r.habits.length === 0)),
    perHabit,
    /** The largest per-habit selection rate (habits with at least 20 typical returns). */
    worstHabitRate: Math.max(0, ...HABITS.map((h) => (perHabit[h].n >= 20 ? (perHabit[h].rate ?? 0) : 0))),
    typicalInTopK: blended.topSorted.slice(0, blended.k).filter((r) => !r.planted).length,
    /** Among the typical returns selected, share on which each component gave points. */
    componentsFiring: selectedTypical.length
      ? {
          digits: selectedTypical.filter((r) => r.digits > 0).length / selectedTypical.length,
          rules: selectedTypical.filter((r) => r.rules > 0).length / selectedTypical.length,
        }
      : null,
    perKind,
  };
}
type Figures = ReturnType<typeof conditionFigures>;

/**
 * `--dump <file>`: appends one JSON line per return (condition, planted kinds, habits,
 * preparer, score, each component's points and strength), to read the false selections and
 * the missed plants with their breakdowns.
 */
function dump(condition: string, rows: Row[]): void {
  const file = arg('dump', '');
  if (!file) return;
  fs.appendFileSync(file, rows.map((r) => JSON.stringify({ condition, ...r })).join('\n') + '\n');
}

async function main() {
  const returns = Number(arg('returns', '4000'));
  const tuning = list(arg('tuning-seeds', arg('seeds', 'rank-a,rank-b')));
  const heldOut = list(arg('held-out-seeds', process.argv.includes('--seeds') ? '' : 'rank-c,rank-d'));
  const habitsMode = arg('habits', 'both');
  if (!['both', 'on', 'off'].includes(habitsMode)) throw new Error('--habits must be both, on or off');
  const shares = parseHabitShares(arg('habit-share', 'default'));
  const typicalSeed = arg('typical-seed', 'rank-typical');
  const typicalReturns = Number(arg('typical-returns', String(returns)));
  const runTypical = arg('typical', 'on') !== 'off';
  const plantShare = Number(arg('plant-share', '0.05'));
  if (!Number.isInteger(returns) || returns < 100) throw new Error('--returns must be a whole number of at least 100');

  const conditions: { key: string; habits: 'on' | 'off'; set: 'tuning' | 'held-out'; seeds: string[] }[] = [];
  for (const h of habitsMode === 'both' ? (['on', 'off'] as const) : [habitsMode as 'on' | 'off'])
    for (const [set, seeds] of [
      ['tuning', tuning],
      ['held-out', heldOut],
    ] as const)
      if (seeds.length) conditions.push({ key: `habits ${h}, ${set}`, habits: h, set, seeds });

  const t0 = performance.now();
  const results: { key: string; habits: string; set: string; seeds: string[]; figures: Figures }[] = [];
  for (const c of conditions) {
    const rows: Row[] = [];
    for (const seed of c.seeds)
      rows.push(...(await runBatch(seed, returns, plantShare, c.habits === 'on' ? shares : NO_HABITS, c.habits === 'on' ? 'habits' : 'no-habits')));
    results.push({ ...c, figures: conditionFigures(rows) });
    dump(c.key, rows);
  }
  let typical: {
    seed: string;
    returns: number;
    withQ: number;
    qBelow: number | null;
    shareQBelow: number | null;
    selected: RateFigure;
    perHabit: Record<HabitKind, RateFigure>;
  } | null = null;
  if (runTypical) {
    const rows = await runBatch(typicalSeed, typicalReturns, 0, shares, 'typical');
    const withQ = rows.filter((r) => r.q !== null);
    const below = withQ.filter((r) => r.q! < Q_LEVEL).length;
    typical = {
      seed: typicalSeed,
      returns: rows.length,
      withQ: withQ.length,
      qBelow: withQ.length ? below : null,
      shareQBelow: withQ.length ? below / withQ.length : null,
      selected: rate(rows),
      perHabit: Object.fromEntries(HABITS.map((h) => [h, rate(rows.filter((r) => r.habits.includes(h)))])) as Record<HabitKind, RateFigure>,
    };
    dump('typical', rows);
  }
  const seconds = (performance.now() - t0) / 1000;

  const f3 = (n: number | null) => (n === null || Number.isNaN(n) ? 'n/a' : n.toFixed(3));
  const pc = (x: RateFigure) => (x.rate === null ? 'n/a' : `${(x.rate * 100).toFixed(1)} %`);
  const col = 22;
  console.log('');
  console.log(
    `Ranking on Aldermere batches of ${returns} returns (plants ${(plantShare * 100).toFixed(0)} %, labelled apart from the batch); habit shares of taxpayers: ${HABITS.map((h) => `${h} ${shares[h]}`).join(', ')}`,
  );
  console.log(''.padEnd(30) + results.map((r) => r.key.padStart(col)).join(''));
  console.log('seeds'.padEnd(30) + results.map((r) => r.seeds.join(',').padStart(col)).join(''));
  const line = (name: string, fn: (f: Figures) => string) => console.log(name.padEnd(30) + results.map((r) => fn(r.figures).padStart(col)).join(''));
  line('precision at k (blended)', (f) => `${f3(f.precisionAtK)} (k=${f.planted})`);
  line('  digit components alone', (f) => f3(f.digitsPrecisionAtK));
  line('  rule factors alone', (f) => f3(f.rulesPrecisionAtK));
  line('recall in top 10 %', (f) => f3(f.recallTop10));
  line('ROC AUC', (f) => f3(f.auc));
  line('typical returns selected', (f) => `${pc(f.typicalSelected)} (${f.typicalSelected.selected}/${f.typicalSelected.n})`);
  line('planted returns selected', (f) => `${pc(f.plantsSelected)} (${f.plantsSelected.selected}/${f.plantsSelected.n})`);
  line('typical returns in top k', (f) => String(f.typicalInTopK));
  console.log('');
  console.log('typical returns selected, by habit (selected / typical returns showing it)');
  line('  no habit', (f) => `${pc(f.noHabitSelected)} (${f.noHabitSelected.selected}/${f.noHabitSelected.n})`);
  for (const h of HABITS) line(`  ${h}`, (f) => (f.perHabit[h].n ? `${pc(f.perHabit[h])} (${f.perHabit[h].selected}/${f.perHabit[h].n})` : '–'));
  line('  worst habit (n ≥ 20)', (f) => `${(f.worstHabitRate * 100).toFixed(1)} %`);
  console.log('');
  console.log('plants by kind: in the top k / selected (of n)');
  const kinds = [...new Set(results.flatMap((r) => Object.keys(r.figures.perKind)))].sort();
  for (const k of kinds) line(`  ${k}`, (f) => (f.perKind[k] ? `${f.perKind[k].inTopK}/${f.perKind[k].selected}/${f.perKind[k].n}` : '–'));
  if (typical) {
    console.log('');
    console.log(`Purely typical batch (seed ${typical.seed}, ${typical.returns} returns, no plants, habits on):`);
    console.log(
      `  pattern q < ${Q_LEVEL}: ${typical.shareQBelow === null ? 'n/a (the profile stores no pattern q-value)' : `${(typical.shareQBelow * 100).toFixed(2)} % (${typical.qBelow}/${typical.withQ})`}`,
    );
    console.log(
      `  selected: ${pc(typical.selected)} (${typical.selected.selected}/${typical.selected.n}); by habit: ${HABITS.map((h) => `${h} ${pc(typical!.perHabit[h])}`).join(', ')}`,
    );
  }
  console.log(`bench  | ${results.reduce((s, r) => s + r.seeds.length, 0) + (typical ? 1 : 0)} batches in ${seconds.toFixed(0)} s`);
  if (flag('json')) {
    console.log(
      JSON.stringify({
        bench: 'ranking',
        returns,
        plantShare,
        habitShares: shares,
        conditions: Object.fromEntries(results.map((r) => [r.key, { habits: r.habits, set: r.set, seeds: r.seeds, ...r.figures }])),
        typical,
        seconds: Math.round(seconds),
      }),
    );
  }
}

main().then(
  () => releaseBenchCluster(),
  (e) => {
    console.error(e);
    releaseBenchCluster();
    process.exit(1);
  },
);
