/**
 * The Programme figures from finished cases (docs/methods.md#programme-outcomes): pure, so a
 * test can check them against a hand computation. The server's repository supplies one
 * {@link OutcomeCase} per case.
 */
import type { CaseSelection, CaseState } from '../cases';
import { katzRatioInterval, logRatioOfMeansInterval, tInterval, wilsonInterval, type Interval } from '../stats/intervals';
import type { Comparison, GroupOutcome, IntervalDto, Outcomes } from './api';

/** Below this many closed cases a figure is not shown as a bar. */
export const MIN_CLOSED = 10;
/** A rate's 95 % interval wider than this says nothing useful. */
export const MAX_RATE_WIDTH = 0.5;

/** One case as the outcome figures need it. */
export interface OutcomeCase {
  id: string;
  selection: CaseSelection;
  state: CaseState;
  /** Adjusted amount in integer cents (closed adjusted only). */
  adjustedCents: number | null;
  /** ISO time the case finished, or null. */
  closedAt: string | null;
  assigneeId: string | null;
  assigneeName: string | null;
  batchId: string;
  batchLabel: string;
  /** 1–10: the case's score decile among its batch's scored returns. */
  decile: number;
  /** Components that added points to the case's score. */
  factors: { key: string; label: string }[];
}

const round2 = (v: number | null) => (v === null ? null : Math.round(v * 100) / 100);
const round4 = (v: number | null) => (v === null ? null : Math.round(v * 10000) / 10000);

function dto(i: Interval, enough: boolean, round: (v: number | null) => number | null): IntervalDto {
  return { estimate: round(i.estimate), low: round(i.low), high: round(i.high), method: i.method, enoughData: enough && i.low !== null && i.high !== null };
}

const isClosed = (c: OutcomeCase) => c.state === 'closed_adjusted' || c.state === 'closed_no_change';
const amounts = (cs: readonly OutcomeCase[]) => cs.filter((c) => c.state === 'closed_adjusted' && c.adjustedCents !== null).map((c) => c.adjustedCents! / 100);

/** Rate and mean adjusted amount of a group, with their intervals. */
export function groupOutcome(cases: readonly OutcomeCase[]): GroupOutcome {
  const closed = cases.filter(isClosed);
  const adjusted = closed.filter((c) => c.state === 'closed_adjusted').length;
  const rate = wilsonInterval(adjusted, closed.length);
  const amt = amounts(cases);
  const mean = tInterval(amt);
  const rateEnough = closed.length >= MIN_CLOSED && rate.high !== null && rate.low !== null && rate.high - rate.low <= MAX_RATE_WIDTH;
  const meanEnough =
    amt.length >= MIN_CLOSED && mean.low !== null && mean.high !== null && mean.estimate !== null && mean.high - mean.low <= Math.abs(mean.estimate);
  return {
    closed: closed.length,
    adjusted,
    referred: cases.filter((c) => c.state === 'referred').length,
    rate: dto(rate, rateEnough, round4),
    meanAdjusted: dto(mean, meanEnough, round2),
  };
}

/** Selected against random, with both lifts. */
export function compare(cases: readonly OutcomeCase[]): Comparison {
  const sel = cases.filter((c) => c.selection === 'score');
  const rnd = cases.filter((c) => c.selection === 'random');
  const s = sel.filter(isClosed);
  const r = rnd.filter(isClosed);
  const sAdj = s.filter((c) => c.state === 'closed_adjusted').length;
  const rAdj = r.filter((c) => c.state === 'closed_adjusted').length;
  const rateLift = katzRatioInterval(sAdj, s.length, rAdj, r.length);
  const amountLift = logRatioOfMeansInterval(amounts(sel), amounts(rnd));
  const liftEnough = (i: Interval, nA: number, nB: number) =>
    nA >= MIN_CLOSED && nB >= MIN_CLOSED && i.estimate !== null && i.low !== null && i.high !== null && i.high - i.low <= Math.abs(i.estimate);
  return {
    selected: groupOutcome(sel),
    random: groupOutcome(rnd),
    rateLift: dto(rateLift, liftEnough(rateLift, s.length, r.length), round4),
    amountLift: dto(amountLift, liftEnough(amountLift, amounts(sel).length, amounts(rnd).length), round4),
  };
}

/** Monday of the ISO time's week (UTC), as YYYY-MM-DD. */
export function weekOf(iso: string): string {
  const d = new Date(iso);
  const day = (d.getUTCDay() + 6) % 7;
  return new Date(Date.UTC(d.getUTCFullYear(), d.getUTCMonth(), d.getUTCDate() - day)).toISOString().slice(0, 10);
}

function groupBy<T>(items: readonly T[], key: (t: T) => string): Map<string, T[]> {
  const m = new Map<string, T[]>();
  for (const it of items) {
    const k = key(it);
    const list = m.get(k);
    if (list) list.push(it);
    else m.set(k, [it]);
  }
  return m;
}

/** Every figure of the Programme screen from the cases (finished ones inside the period, and open random ones). */
export function computeOutcomes(cases: readonly OutcomeCase[], openRandom: number): Outcomes {
  const finished = cases.filter((c) => c.closedAt !== null);
  const byDecile = Array.from({ length: 10 }, (_, i) => {
    const d = finished.filter((c) => c.decile === i + 1);
    return { decile: i + 1, selected: groupOutcome(d.filter((c) => c.selection === 'score')), random: groupOutcome(d.filter((c) => c.selection === 'random')) };
  });
  const labels = new Map<string, string>();
  for (const c of finished) for (const f of c.factors) labels.set(f.key, f.label);
  const byFactor = [...labels.entries()]
    .map(([key, label]) => ({ key, label, outcome: groupOutcome(finished.filter((c) => c.selection === 'score' && c.factors.some((f) => f.key === key))) }))
    .sort((a, b) => b.outcome.closed - a.outcome.closed || a.key.localeCompare(b.key));
  const examinerWeeks = [
    ...groupBy(
      finished.filter((c) => c.assigneeId),
      (c) => `${c.assigneeId}|${weekOf(c.closedAt!)}`,
    ).entries(),
  ]
    .map(([k, cs]) => ({ examinerId: cs[0].assigneeId!, name: cs[0].assigneeName ?? 'a former examiner', week: k.split('|')[1], finished: cs.length }))
    .sort((a, b) => a.week.localeCompare(b.week) || a.name.localeCompare(b.name));
  const byExaminer = [
    ...groupBy(
      finished.filter((c) => c.assigneeId),
      (c) => c.assigneeId!,
    ).entries(),
  ]
    .map(([id, cs]) => {
      const weeks = examinerWeeks.filter((w) => w.examinerId === id);
      return {
        examinerId: id,
        name: cs[0].assigneeName ?? 'a former examiner',
        comparison: compare(cs),
        closuresPerWeek: Math.round((cs.length / Math.max(1, weeks.length)) * 10) / 10,
      };
    })
    .sort((a, b) => a.name.localeCompare(b.name));
  const byBatch = [...groupBy(finished, (c) => c.batchId).entries()]
    .map(([batchId, cs]) => ({ batchId, label: cs[0].batchLabel, comparison: compare(cs) }))
    .sort((a, b) => a.label.localeCompare(b.label));
  const weekly = [...groupBy(finished, (c) => weekOf(c.closedAt!)).entries()]
    .map(([week, cs]) => {
      const adj = cs.filter((c) => c.state === 'closed_adjusted');
      const cents = adj.reduce((s, c) => s + (c.adjustedCents ?? 0), 0);
      return { week, finished: cs.length, adjusted: adj.length, adjustedTotal: (cents / 100).toFixed(2) };
    })
    .sort((a, b) => a.week.localeCompare(b.week));
  return { overall: compare(finished), byDecile, byFactor, byExaminer, byBatch, weekly, examinerWeeks, openRandom, minClosed: MIN_CLOSED };
}
