/**
 * `npm run bench:ranking [-- --returns 4000 --seeds rank-a,rank-b]`
 *
 * Ranking quality on labelled Aldermere batches (seeds other than the demo's): each batch is
 * generated with its answer list kept apart, loaded through the intake service, scored by
 * the scoring service under the active profile, and then, for the planted returns:
 *   precision at k (k = number of plants): share of the top k that are plants;
 *   recall in the top 10 %: share of plants ranked in the top tenth;
 *   ROC AUC: chance a random plant outranks a random unplanted return (ties count half;
 *   Mann–Whitney U / (n_plants × n_unplanted), Hanley & McNeil 1982, Radiology);
 * for the blended score, the digit components alone and the rule-based factors alone, and
 * recall at k per kind of plant. A benchmark: it prints, it does not fail.
 */
import fs from 'node:fs';
import path from 'node:path';
import { ingestUpload } from '../server/batches/batch.service';
import { scoreBatchNow } from '../server/scoring/scoring.service';
import { writeCsvBatch } from '../server/seed/batch-files';
import { DEFAULT_INTAKE_LIMITS } from '../shared/returns/batch-rows';
import type { ComponentResult } from '../shared/scoring/breakdown';
import type { ComponentKey } from '../shared/scoring/settings';
import { freshBenchDb, releaseBenchCluster } from './lib/bench-db';
import { projectRoot } from './lib/local-services';

function arg(name: string, dflt: string): string {
  const i = process.argv.indexOf(`--${name}`);
  return i >= 0 ? process.argv[i + 1] : dflt;
}

const DIGIT_KEYS: ComponentKey[] = ['digits', 'historyDigits', 'preparerDigits'];

interface Row {
  ref: string;
  planted: boolean;
  kinds: string[];
  total: number;
  digits: number;
  rules: number;
}

/** Precision at k, recall in the top 10 %, ROC AUC for one score. */
export function rankingFigures(rows: Row[], score: (r: Row) => number) {
  // Ties are broken by reference so the order is repeatable (not in the plants' favour).
  const sorted = [...rows].sort((a, b) => score(b) - score(a) || (a.ref < b.ref ? -1 : 1));
  const plants = rows.filter((r) => r.planted).length;
  const honest = rows.length - plants;
  const topK = sorted.slice(0, plants).filter((r) => r.planted).length;
  const tenth = Math.ceil(rows.length / 10);
  const inTenth = sorted.slice(0, tenth).filter((r) => r.planted).length;
  // AUC by ranks with ties averaged.
  const asc = [...rows].sort((a, b) => score(a) - score(b));
  let rankSum = 0;
  for (let i = 0; i < asc.length; ) {
    let j = i;
    while (j + 1 < asc.length && score(asc[j + 1]) === score(asc[i])) j++;
    const avg = (i + j) / 2 + 1;
    for (let k = i; k <= j; k++) if (asc[k].planted) rankSum += avg;
    i = j + 1;
  }
  const auc = (rankSum - (plants * (plants + 1)) / 2) / (plants * honest);
  return { precisionAtK: topK / plants, recallTop10: inTenth / plants, auc, k: plants, topSorted: sorted };
}

async function runSeed(seed: string, returns: number): Promise<Row[]> {
  const dir = path.join(projectRoot, 'bench-output', `ranking-${seed}-${returns}`);
  const opts = { seed, returns, plantShare: 0.05, refPrefix: 'RNK' };
  const w = await writeCsvBatch(dir, opts);
  const db = await freshBenchDb('plumbline_bench_ranking');
  try {
    const size = (f: string) => fs.statSync(f).size;
    const part = (t: 'returns' | 'line_items' | 'statements') => ({ originalName: `${t}.csv`, path: w.files[t]!, size: size(w.files[t]!) });
    const warn = console.warn;
    console.warn = () => undefined;
    const out = await ingestUpload({ dataSource: db.ds, boss: null, limits: DEFAULT_INTAKE_LIMITS }, { format: 'csv', parts: { returns: part('returns'), line_items: part('line_items'), statements: part('statements') } }, { id: db.clerkId });
    console.warn = warn;
    if (out.kind !== 'accepted') throw new Error(`the generated batch was not accepted: ${JSON.stringify(out).slice(0, 400)}`);
    const batchId = out.batch.id;
    const t0 = performance.now();
    await scoreBatchNow(db.ds, batchId);
    console.log(`bench  | ${seed}: ${w.counts.returns} returns, ${w.labels.length} planted; scored in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
    const labels = new Map(w.labels.map((l) => [l.returnRef, l.kinds]));
    const rows: { return_ref: string; components: ComponentResult[] | null; risk_score: string | null }[] = await db.ds.query(
      `SELECT r.return_ref, s.risk_score, s.breakdown->'components' AS components FROM return_score s JOIN tax_return r ON r.id = s.return_id WHERE s.batch_id = $1`,
      [batchId],
    );
    return rows.map((r) => {
      const comps = r.components ?? [];
      const digits = comps.filter((c) => DIGIT_KEYS.includes(c.key)).reduce((s, c) => s + c.points, 0);
      const all = comps.reduce((s, c) => s + c.points, 0);
      return { ref: `${seed}:${r.return_ref}`, planted: labels.has(r.return_ref), kinds: labels.get(r.return_ref) ?? [], total: Number(r.risk_score ?? 0), digits, rules: all - digits };
    });
  } finally {
    await db.close();
  }
}

async function main() {
  const returns = Number(arg('returns', '4000'));
  const seeds = arg('seeds', 'rank-a,rank-b').split(',');
  const all: Row[] = [];
  for (const seed of seeds) all.push(...(await runSeed(seed, returns)));
  const f = (n: number) => n.toFixed(3);
  console.log('');
  console.log(`Ranking of ${all.filter((r) => r.planted).length} planted among ${all.length} returns (seeds ${seeds.join(', ')}; plants labelled apart from the batch)`);
  console.log('score             precision@k  recall@top10%  ROC AUC');
  for (const [name, score] of [
    ['blended risk score', (r: Row) => r.total],
    ['digit components', (r: Row) => r.digits],
    ['rule factors', (r: Row) => r.rules],
  ] as const) {
    const m = rankingFigures(all, score);
    console.log(`${name.padEnd(18)}${f(m.precisionAtK).padStart(11)}${f(m.recallTop10).padStart(15)}${f(m.auc).padStart(9)}`);
  }
  const blended = rankingFigures(all, (r) => r.total);
  const top = new Set(blended.topSorted.slice(0, blended.k).map((r) => r.ref));
  const kinds = new Map<string, { n: number; hit: number }>();
  for (const r of all.filter((x) => x.planted)) for (const k of r.kinds) {
    const e = kinds.get(k) ?? { n: 0, hit: 0 };
    e.n++;
    if (top.has(r.ref)) e.hit++;
    kinds.set(k, e);
  }
  console.log('');
  console.log('recall at k by plant kind (blended score)');
  for (const [k, e] of [...kinds].sort((a, b) => a[0].localeCompare(b[0]))) console.log(`  ${k.padEnd(26)}${`${e.hit}/${e.n}`.padStart(8)}  ${f(e.hit / e.n)}`);
  const honestTop = blended.topSorted.slice(0, blended.k).filter((r) => !r.planted).length;
  console.log(`unplanted (typical) returns in the top k: ${honestTop}`);
  releaseBenchCluster();
}

main().catch((e) => {
  console.error(e);
  releaseBenchCluster();
  process.exit(1);
});
