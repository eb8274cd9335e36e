/**
 * Scoring a filing batch: one run per batch and profile version. The run's batch-wide
 * context (peer percentiles, preparer pools, line-code pools) is computed once and stored;
 * the returns are then scored in id-ordered slices ("chunks"), each its own pg-boss job and
 * its own transaction, so two workers share the work and a crash loses at most the slice
 * in flight, which is retried. Every score insert is `ON CONFLICT DO NOTHING` on
 * (return, profile version), so nothing is ever scored twice.
 */
import type PgBoss from 'pg-boss';
import type { DataSource, EntityManager } from 'typeorm';
import type { StatementKind } from '../../shared/returns/line-codes';
import type { ScoreBreakdown } from '../../shared/scoring/breakdown';
import { benjaminiHochberg, formatP } from '../../shared/scoring/calibration';
import { buildPeerBands, incomeBand, type PeerBands, type ReturnFacts } from '../../shared/scoring/factors';
import { thousands } from '../../shared/scoring/format';
import {
  clientPoolNull,
  combineCodeCounts,
  estimateConcentration,
  expectedForPool,
  judgePool,
  pearson,
  totalCounts,
  type CodeDigitCounts,
} from '../../shared/scoring/pools';
import { PERIODIC_COUNTS, PERIODIC_LINE_CODES, type RecurrenceRates } from '../../shared/scoring/recurring';
import { PENDING_Q_TEXT, scoreReturn, type BatchNulls, type ScoreContext } from '../../shared/scoring/score-return';
import { COMPONENTS, ScoringSettingsSchema, type ScoringSettings } from '../../shared/scoring/settings';
import { openCasesForScores } from '../cases/case-open.repository';
import { QUEUES } from '../queue/queues';
import {
  activeProfileVersion,
  addRunProgress,
  batchDeductionFigures,
  batchReturnIds,
  createBatchSlots,
  findRun,
  finishRunIfComplete,
  historyOf,
  insertRun,
  insertScores,
  linesOf,
  markBatchScored,
  markBatchScoring,
  raiseWorkMem,
  runPatternPs,
  runWithSettings,
  slotDigitCounts,
  slotPopularity,
  slotPreparerSharing,
  slotRecurrence,
  slotRecurringTotals,
  slotRoundRates,
  slotTaxpayerDigitCounts,
  statementsOf,
  taxpayerCodeDigitCounts,
  taxpayerPreparerDigitCounts,
  unscoredReturns,
  writePatternQs,
} from './scoring.repository';
import type { Db } from '../db/db';
import { profileSettings } from './scoring-profile.repository';
import { finishSelection } from '../programme/programme.service';

/** Returns per chunk job (env SCORING_CHUNK_SIZE). Large enough that a chunk outlasts pg-boss's 0.5 s polling gap. */
export const CHUNK_SIZE = Number(process.env.SCORING_CHUNK_SIZE ?? 500);

/** What a chunk job carries. */
export interface ChunkJob {
  runId: string;
  fromId: string;
  toId: string;
}

/**
 * The stored batch-wide context of a run (JSON): peer percentiles, the batch's per-code
 * digit profile, each preparer's per-code digits and shared amounts, the spread between
 * pools (Dirichlet-multinomial concentrations; null = none beyond chance), and the null
 * models of the pattern components (docs/methods.md, "Scoring").
 */
export interface RunContext {
  peerLimits: PeerBands['limits'];
  costLimits: NonNullable<PeerBands['costLimits']>;
  recurringLimits: NonNullable<PeerBands['recurringLimits']>;
  /** The ordinary year-to-year rise of a filer's deductions (absent on runs stored before it was added). */
  deductionRise?: PeerBands['deductionRise'];
  lineCodes: CodeDigitCounts;
  preparers: Record<string, CodeDigitCounts>;
  preparerClients: Record<string, number>;
  taxpayers: number;
  shared: Record<string, number[]>;
  alphaPreparer: number | null;
  alphaHistory: number | null;
  /**
   * Profile version 3 on: the chance spread of a preparer's pool of k clients (the key),
   * [scale, degrees of freedom] of the scaled chi-square fitted to random sets of k of the
   * batch's taxpayers (shared/scoring/pools.ts clientPoolNull); absent on earlier runs.
   */
  preparerNull?: Record<string, [number, number]>;
  nulls: {
    recurrence: RecurrenceRates;
    round: Record<string, [number, number, number, number]>;
    popular: [number, number, number, number][];
    slots: [number, number];
  };
}

/** Parses a profile version's stored settings; a missing version is an error. */
function parseSettings(version: number, stored: unknown): ScoringSettings {
  if (stored === null || stored === undefined) throw new Error(`Scoring profile version ${version} does not exist.`);
  return ScoringSettingsSchema.parse(stored);
}

/**
 * Runs one aggregate in its own transaction with more sort/hash memory than the default
 * 4 MB, so the batch-wide aggregates over a million line items stay in memory.
 */
function withWorkMem<T>(ds: DataSource, fn: (m: EntityManager) => Promise<T>): Promise<T> {
  return ds.transaction(async (m) => {
    await raiseWorkMem(m);
    return fn(m);
  });
}

/** Taxpayers sampled for the spread between history pools. */
const HISTORY_SAMPLE = 1500;

/**
 * Batch-wide context, computed once per run. The batch's amounts are gathered once into
 * slots (one per return, line code and amount: a recurring bill counts once) and every
 * null model is read from them; the peer percentiles run beside it.
 */
export async function computeRunContext(ds: DataSource, batchId: string, settings: ScoringSettings): Promise<RunContext> {
  const p = settings.params;
  const [figures, slots] = await Promise.all([
    withWorkMem(ds, (m) => batchDeductionFigures(m, batchId)),
    withWorkMem(ds, async (m) => {
      await createBatchSlots(m, batchId);
      const recurrence = await slotRecurrence(m, PERIODIC_COUNTS);
      const round = await slotRoundRates(m);
      const popularity = await slotPopularity(m, p.repeatMinCents);
      const digits = await slotDigitCounts(m);
      const sharing = await slotPreparerSharing(m, p.repeatMinCents);
      const periodic = PERIODIC_LINE_CODES.filter((c) => {
        const r = recurrence[c];
        return !!r && r.returns > 0 && r.recurring / r.returns >= p.recurrenceMinRate;
      });
      const recurringTotals = await slotRecurringTotals(m, periodic);
      const taxpayerDigits = p.preparerNull === 'clients' ? await slotTaxpayerDigitCounts(m) : [];
      return { recurrence, round, popularity, digits, sharing, recurringTotals, taxpayerDigits };
    }),
  ]);
  const {
    limits: peerLimits,
    costLimits,
    recurringLimits,
    deductionRise,
  } = buildPeerBands(
    figures.map((f) => ({ ...f, recurring: slots.recurringTotals.get(f.id) })),
    p,
  );
  const { lineCodes, preparers } = slots.digits;
  const spread = (pools: CodeDigitCounts[]) => {
    const a = estimateConcentration(
      pools.map((byCode) => ({ n: totalCounts(byCode).reduce((s, x) => s + x, 0), x2: pearson(totalCounts(byCode), expectedForPool(byCode, lineCodes)) })),
    );
    return Number.isFinite(a) ? a : null;
  };
  // A pool leaves the client being scored out, so a preparer of c clients is judged on c − 1.
  let preparerNull: RunContext['preparerNull'];
  if (p.preparerNull === 'clients') {
    preparerNull = {};
    for (const c of new Set(Object.values(slots.sharing.clients).map((n) => n - 1))) {
      const fit = clientPoolNull(slots.taxpayerDigits, c, lineCodes);
      if (fit) preparerNull[String(c)] = [fit.scale, fit.df];
    }
  }
  const sampleOf = Math.max(1, Math.ceil(slots.sharing.taxpayers / HISTORY_SAMPLE));
  const histories = await taxpayerCodeDigitCounts(ds, { batchId, sampleOf });
  return {
    peerLimits,
    costLimits: costLimits ?? {},
    recurringLimits: recurringLimits ?? {},
    ...(deductionRise ? { deductionRise } : {}),
    lineCodes,
    preparers,
    preparerClients: slots.sharing.clients,
    taxpayers: slots.sharing.taxpayers,
    shared: slots.sharing.shared,
    alphaPreparer: spread(Object.values(preparers)),
    alphaHistory: spread([...histories.values()]),
    ...(preparerNull ? { preparerNull } : {}),
    nulls: { recurrence: slots.recurrence, round: slots.round, popular: slots.popularity.popular, slots: slots.popularity.slots },
  };
}

/** Creates the run for (batch, version) once, and returns it with the batch's return ids. */
async function ensureRun(ds: DataSource, batchId: string, version?: number): Promise<{ runId: string; done: number; ids: string[] }> {
  const v = version ?? (await activeProfileVersion(ds));
  const settings = parseSettings(v, await profileSettings(ds, v));
  let run = await findRun(ds, batchId, v);
  const ids = await batchReturnIds(ds, batchId);
  if (!run) {
    await insertRun(ds, batchId, v, ids.length, await computeRunContext(ds, batchId, settings));
    run = (await findRun(ds, batchId, v))!;
  }
  const runId = run.id;
  const done = run.scored + run.failed;
  // A finished run leaves the batch as it is (a retried job, or a second call).
  if (!run.finishedAt) {
    await markBatchScoring(ds, batchId, done);
    if (ids.length === 0) await finishIfDone(ds, runId);
  }
  return { runId, done, ids };
}

/** Splits id-ordered return ids into chunk jobs. */
function chunkJobs(runId: string, ids: string[]): ChunkJob[] {
  const jobs: ChunkJob[] = [];
  for (let i = 0; i < ids.length; i += CHUNK_SIZE) jobs.push({ runId, fromId: ids[i], toId: ids[Math.min(ids.length, i + CHUNK_SIZE) - 1] });
  return jobs;
}

/**
 * Starts (or resumes) scoring a batch under a profile version: creates the run once, marks
 * the batch as scoring, and sends one job per slice. Safe to call again: the run is reused
 * and slices already scored are skipped by their jobs.
 *
 * @returns the run id and how many chunk jobs were sent
 */
export async function startScoringRun(ds: DataSource, boss: PgBoss, batchId: string, version?: number): Promise<{ runId: string; chunks: number }> {
  const { runId, ids } = await ensureRun(ds, batchId, version);
  const jobs = chunkJobs(runId, ids);
  for (let i = 0; i < jobs.length; i++) {
    // singletonKey: a retried batch job does not queue the same slice twice while it waits.
    await boss.send(QUEUES.scoreChunk, jobs[i], { singletonKey: `${runId}:${i}` });
  }
  return { runId, chunks: jobs.length };
}

/**
 * Scores a whole batch in this process, slice by slice, without the queue: the same code the
 * worker runs, for the demo seed, benchmarks and tests.
 */
export async function scoreBatchNow(ds: DataSource, batchId: string, version?: number): Promise<{ runId: string; scored: number; failed: number }> {
  const { runId, ids } = await ensureRun(ds, batchId, version);
  let scored = 0;
  let failed = 0;
  for (const job of chunkJobs(runId, ids)) {
    const r = await scoreChunk(ds, job);
    scored += r.scored;
    failed += r.failed;
  }
  return { runId, scored, failed };
}

/**
 * Marks the run finished once every return is scored or failed, and then, in the same
 * transaction, gives each score its Benjamini–Hochberg q-value over the whole batch's
 * pattern p-values (the q needs every p, so it is the run's finishing step; the chunk that
 * scores the last returns does it, under the run row's lock, so it happens exactly once and
 * a crash before the commit leaves the run unfinished for the retried chunk to finish).
 */
async function finishIfDone(db: Db, runId: string): Promise<boolean> {
  if (!('queryRunner' in db) || !db.queryRunner) {
    // Not inside a transaction yet: take one, so the finish and the q-values commit together.
    return (db as DataSource).transaction((m) => finishIfDone(m, runId));
  }
  const run = await finishRunIfComplete(db, runId);
  if (!run) return false;
  await writeBatchQValues(db, run.batchId, run.version);
  // A capacity's cut and the random review sample below it need every score (docs/methods.md#programme-outcomes).
  await finishSelection(db, run.batchId, run.version);
  await markBatchScored(db, run.batchId);
  return true;
}

/** Benjamini–Hochberg over the run's pattern p-values; writes q and its sentence into each score. */
async function writeBatchQValues(db: EntityManager, batchId: string, version: number): Promise<void> {
  const ps = await runPatternPs(db, batchId, version);
  if (!ps.length) return;
  const qs = benjaminiHochberg(ps.map((x) => x.p));
  const index = COMPONENTS.indexOf('digits');
  const rows = ps.map((x, i) => ({
    id: x.id,
    q: qs[i],
    t:
      `Across the batch's ${thousands(ps.length)} scored returns: ${formatP(qs[i], 'q')} (Benjamini–Hochberg; ` +
      (qs[i] < 0.05
        ? 'among returns with q below 0.05, at most about 1 in 20 is expected to be ordinary).'
        : 'not unusual once so many returns are looked at).'),
  }));
  for (let i = 0; i < rows.length; i += 5000) await writePatternQs(db, index, PENDING_Q_TEXT, rows.slice(i, i + 5000));
}

function toHistoryTotals(h: Awaited<ReturnType<typeof historyOf>>[number]) {
  return {
    wages: h.wages,
    interest: h.interest,
    receipts: h.receipts,
    businessExpenses: h.expenses,
    income: h.income,
    charity: 0,
    medical: 0,
    deductions: h.deductions,
    taxable: h.taxable,
    tax: h.tax,
    withheld: h.withheld,
    refund: h.refund,
    reported: { income: null, deductions: null, refund: null },
  };
}

/** First-digit counts per line code of one return's itemised lines, one per code and amount (as the pools count). */
function ownCodeDigitCounts(lines: readonly { code: string; cents: number }[]): CodeDigitCounts {
  const seen = new Set<string>();
  const out: CodeDigitCounts = {};
  for (const l of lines) {
    if (l.cents === 0 || l.code.startsWith('tot.') || l.code === 'tax.refund') continue;
    const a = Math.abs(l.cents);
    const key = `${l.code}|${a}`;
    if (seen.has(key)) continue;
    seen.add(key);
    const d = Number(String(a).replace(/^0+/, '')[0]);
    (out[l.code] ??= new Array(9).fill(0))[d - 1]++;
  }
  return out;
}

/** One scored (or failed) return, ready to store. */
interface Outcome {
  returnId: string;
  taxpayerId: string;
  status: 'scored' | 'failed';
  riskScore: number | null;
  stakeCents: number | null;
  priority: number | null;
  breakdown: ScoreBreakdown | null;
  reason: string | null;
}

/**
 * Scores one slice of a run. Idempotent: returns already scored under the run's version are
 * skipped, and the slice's scores, cases and progress commit together or not at all.
 *
 * @returns how many returns this call scored and how many failed
 */
export async function scoreChunk(ds: DataSource, job: ChunkJob): Promise<{ scored: number; failed: number; skipped: boolean }> {
  // The run and its version's settings in one read: a slice needs both.
  const run = await runWithSettings<RunContext>(ds, job.runId);
  if (!run) throw new Error(`scoring run ${job.runId} does not exist`);
  const { batchId, version, context } = run;
  const settings = parseSettings(version, run.settings);
  const todo = await unscoredReturns(ds, batchId, version, job.fromId, job.toId);
  if (!todo.length) {
    await finishIfDone(ds, job.runId);
    return { scored: 0, failed: 0, skipped: true };
  }

  const trace = process.env.PLUMBLINE_TRACE
    ? (what: string, t: number) => console.log(`[trace] ${what} ${(performance.now() - t).toFixed(0)} ms`)
    : () => undefined;
  let t = performance.now();
  const ids = todo.map((r) => r.id);
  const taxpayerIds = [...new Set(todo.map((r) => r.taxpayerId))];
  const byClients = settings.params.preparerNull === 'clients' && !!context.preparerNull;
  const [lines, statements, history, tpCounts, clientCounts] = await Promise.all([
    linesOf(ds, ids),
    statementsOf(ds, [...new Set(todo.map((r) => r.tin))]),
    historyOf(ds, taxpayerIds),
    taxpayerCodeDigitCounts(ds, { taxpayerIds }),
    byClients ? taxpayerPreparerDigitCounts(ds, batchId, taxpayerIds) : Promise.resolve(null),
  ]);
  trace('load', t);
  t = performance.now();
  const historyByTaxpayer = new Map<string, typeof history>();
  for (const h of history) historyByTaxpayer.set(h.taxpayerId, [...(historyByTaxpayer.get(h.taxpayerId) ?? []), h]);
  const peers: PeerBands = {
    bandOf: incomeBand,
    limits: context.peerLimits,
    costLimits: context.costLimits,
    recurringLimits: context.recurringLimits,
    deductionRise: context.deductionRise,
  };
  const sharedSets = new Map<string, Set<number>>();
  const batch: BatchNulls = {
    recurrence: context.nulls.recurrence,
    round: context.nulls.round,
    popularity: new Map(context.nulls.popular.map(([c, w, k, tp]) => [c, [w, k, tp] as const])),
    slots: context.nulls.slots,
  };
  const alpha = (a: number | null) => (a === null ? Infinity : a);
  const pp = settings.params;

  const outcomes: Outcome[] = todo.map((r) => {
    try {
      const own = lines.get(r.id) ?? [];
      if (own.length === 0) throw new Error('the return has no line items on file');
      const others = (historyByTaxpayer.get(r.taxpayerId) ?? []).filter((h) => h.returnId !== r.id && h.taxYear !== r.taxYear);
      const facts: ReturnFacts = {
        taxYear: r.taxYear,
        activityCode: r.activityCode,
        lines: own,
        statements: (statements.get(r.tin) ?? []).filter((s) => s.taxYear === r.taxYear).map((s) => ({ kind: s.kind as StatementKind, cents: s.cents })),
        history: others.map((h) => ({ taxYear: h.taxYear, totals: toHistoryTotals(h) })),
      };
      let shared = r.preparerId ? sharedSets.get(r.preparerId) : undefined;
      if (r.preparerId && !shared) {
        shared = new Set(context.shared[r.preparerId] ?? []);
        sharedSets.set(r.preparerId, shared);
      }
      // This return's own slots, left out of its pools.
      const ownCounts = ownCodeDigitCounts(own);
      const tp = others.length ? tpCounts.get(r.taxpayerId) : undefined;
      const prep = r.preparerId ? context.preparers[r.preparerId] : undefined;
      const clients = r.preparerId ? (context.preparerClients[r.preparerId] ?? 1) : 0;
      // Version 3 on: the whole client leaves their preparer's pool (their other years are the
      // history pool's evidence, so they count once), judged against random sets of as many clients.
      const clientFit = byClients && clients > 1 ? context.preparerNull![String(clients - 1)] : undefined;
      const ctx: ScoreContext = {
        settings,
        peers,
        preparer:
          prep && (!byClients || clientFit)
            ? judgePool(
                combineCodeCounts(prep, clientFit ? (clientCounts?.get(`${r.taxpayerId}|${r.preparerId}`) ?? ownCounts) : ownCounts, -1),
                context.lineCodes,
                clientFit ? { scale: clientFit[0], df: clientFit[1] } : alpha(context.alphaPreparer),
                pp.pooledFixedThresholdMinN,
                pp.patternPStart,
                pp.patternPFull,
              )
            : null,
        history: tp
          ? judgePool(
              combineCodeCounts(tp, ownCounts, -1),
              context.lineCodes,
              alpha(context.alphaHistory),
              pp.pooledFixedThresholdMinN,
              pp.patternPStart,
              pp.patternPFull,
            )
          : null,
        batch,
        sharing: r.preparerId && context.taxpayers > 1 ? { shared: shared ?? new Set(), poolShare: Math.max(0, clients - 1) / (context.taxpayers - 1) } : null,
      };
      const s = scoreReturn(facts, ctx);
      return {
        returnId: r.id,
        taxpayerId: r.taxpayerId,
        status: 'scored',
        riskScore: s.riskScore,
        stakeCents: s.amountAtStakeCents,
        priority: s.priority,
        breakdown: s.breakdown,
        reason: null,
      };
    } catch (e) {
      return {
        returnId: r.id,
        taxpayerId: r.taxpayerId,
        status: 'failed',
        riskScore: null,
        stakeCents: null,
        priority: null,
        breakdown: null,
        reason: e instanceof Error ? e.message : String(e),
      };
    }
  });

  trace('score', t);
  t = performance.now();
  return ds.transaction(async (m) => {
    const scoreIdOf = await insertScores(
      m,
      batchId,
      version,
      outcomes.map((o) => ({ r: o.returnId, s: o.status, rs: o.riskScore, st: o.stakeCents, p: o.priority, b: o.breakdown, f: o.reason })),
    );
    const fresh = outcomes.filter((o) => scoreIdOf.has(o.returnId));
    const selected = fresh.filter((o) => o.status === 'scored' && o.breakdown!.selected);
    await openCasesForScores(
      m,
      batchId,
      version,
      selected.map((o) => ({
        returnId: o.returnId,
        taxpayerId: o.taxpayerId,
        scoreId: scoreIdOf.get(o.returnId)!,
        riskScore: o.riskScore!,
        stakeCents: o.stakeCents!,
        priority: o.priority!,
      })),
    );
    const scored = fresh.filter((o) => o.status === 'scored').length;
    const failed = fresh.length - scored;
    await addRunProgress(m, job.runId, batchId, scored, failed);
    await finishIfDone(m, job.runId);
    trace('store', t);
    return { scored, failed, skipped: false };
  });
}
