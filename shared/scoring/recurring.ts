/**
 * Recurring bills: the same amount on the same line, a year's worth of times (rent,
 * premiums, instalments, monthly gifts). Such a group is one decision by the filer, not many
 * figures, so the digit, round-amount and repeated-amount tests count it once
 * (docs/methods.md, "Scoring").
 *
 * Which lines may carry recurring bills is decided per line code from its meaning in
 * shared/returns/line-codes.ts, and confirmed from the batch: a code counts as periodic in a
 * batch only when enough of the batch's returns with that code show such a group
 * ({@link RecurrenceRates}, learned in the run's context pass). Everything here is pure.
 */
import type { CentsLine, LineCode } from '../returns/line-codes';
import { money } from './format';

/**
 * Line codes whose meaning admits a fixed periodic payment (common practice, no source):
 * other business costs (rent, fees, insurance), vehicle (leasing), charitable gifts (monthly
 * standing orders), medical costs (premiums, instalment plans), business receipts (a fixed
 * monthly fee from one client). Supplies and travel are bought as needed; wages, interest
 * and tax lines are one entry per payer.
 */
export const PERIODIC_LINE_CODES: readonly LineCode[] = ['exp.business.other', 'exp.business.vehicle', 'ded.charity', 'ded.medical', 'inc.business.receipts'];

/**
 * Numbers of payments in a year that make a schedule (common practice, no source): monthly
 * (12, or 13 for four-weekly), every two months (6), quarterly (4).
 */
export const PERIODIC_COUNTS: readonly number[] = [4, 6, 12, 13];

/** Per line code: how many returns of the batch carry the code, and how many show a recurring group on it. */
export type RecurrenceRates = Record<string, { returns: number; recurring: number }>;

/** Share of a code's returns with a recurring group from which the code counts as periodic in the batch. */
export const MIN_RECURRENCE_RATE = 0.01;

/** One group of equal amounts on one line code of a return. */
export interface AmountGroup {
  code: LineCode;
  cents: number;
  count: number;
}

/** Groups of equal amounts (absolute cents) per line code, itemised lines only. */
export function equalAmountGroups(lines: readonly CentsLine[]): AmountGroup[] {
  const m = new Map<string, AmountGroup>();
  for (const l of lines) {
    if (l.cents === 0) continue;
    const a = Math.abs(l.cents);
    const key = `${l.code}|${a}`;
    const g = m.get(key);
    if (g) g.count++;
    else m.set(key, { code: l.code, cents: a, count: 1 });
  }
  return [...m.values()];
}

/** Does this group look like a schedule of payments on a line that may have one (ignoring the batch)? */
export function isScheduleShaped(g: AmountGroup): boolean {
  return PERIODIC_LINE_CODES.includes(g.code) && PERIODIC_COUNTS.includes(g.count);
}

/** Is the code periodic in this batch (its learned recurrence rate reaches the floor)? Without rates, the vocabulary decides. */
export function isPeriodicInBatch(code: LineCode, rates: RecurrenceRates | null): boolean {
  if (!PERIODIC_LINE_CODES.includes(code)) return false;
  if (!rates) return true;
  const r = rates[code];
  return !!r && r.returns > 0 && r.recurring / r.returns >= MIN_RECURRENCE_RATE;
}

/** A return's amounts with its recurring bills counted once. */
export interface CollapsedAmounts {
  /** Itemised amounts (signed cents), each recurring group contributing one entry. */
  amounts: number[];
  /** The same with the line code of each amount. */
  lines: CentsLine[];
  /** The recurring groups found. */
  recurring: AmountGroup[];
}

/**
 * Counts each recurring group once: a group of two or more equal amounts on a code that is
 * periodic in this batch (a schedule's full count is what teaches the batch that a code
 * recurs; a bill paid for part of a year, or paid twice, is the same habit).
 *
 * @param itemised the return's itemised lines (no totals, no refund)
 * @param rates the batch's learned recurrence rates (null: the vocabulary alone decides)
 */
export function collapseRecurring(itemised: readonly CentsLine[], rates: RecurrenceRates | null): CollapsedAmounts {
  const recurring = equalAmountGroups(itemised).filter((g) => g.count >= 2 && isPeriodicInBatch(g.code, rates));
  if (!recurring.length) return { amounts: itemised.map((l) => l.cents), lines: [...itemised], recurring };
  const seen = new Set<string>();
  const isRecurring = new Set(recurring.map((g) => `${g.code}|${g.cents}`));
  const lines: CentsLine[] = [];
  for (const l of itemised) {
    const key = `${l.code}|${Math.abs(l.cents)}`;
    if (isRecurring.has(key)) {
      if (seen.has(key)) continue;
      seen.add(key);
    }
    lines.push(l);
  }
  return { amounts: lines.map((l) => l.cents), lines, recurring };
}

/** "12 equal payments of 850.00 on other business costs" for each group. */
export function describeRecurring(groups: readonly AmountGroup[], labelOf: (code: LineCode) => string): string {
  return groups.map((g) => `${g.count} equal payments of ${money(g.cents)} on ${labelOf(g.code).toLowerCase()}`).join('; ');
}
