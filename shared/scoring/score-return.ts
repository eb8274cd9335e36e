/**
 * One return's risk score: each component gives a strength 0–1; it adds
 * weight × strength points; the score is the sum, capped at 100 (docs/methods.md#scoring-components). The
 * sum is the explanation: "+28 points: business expenses are 97 % of receipts".
 *
 * The amount at stake is the tax an adjustment could recover if the strongest concern is
 * borne out: tax(taxable + U) − tax(taxable) + T, where U is the largest income estimate of
 * the flagged factors (the largest, not the sum, so one concern seen by two rules is not
 * counted twice) and T the tax directly at stake (an over-claimed refund).
 * Priority = risk score × amount at stake (in currency units).
 */
import { DigitCounter, SIZE_AWARE_MIN_N, summarizeCounter } from '../digits';
import { computeTax, computeTotals, LINE_CODE_DEFS, type CentsLine, type LineCode, type ReturnTotals } from '../returns/line-codes';
import type { ComponentResult, PoolSnapshot, ScoreBreakdown } from './breakdown';
import { digitMadPValue, formatP, shrunkRate, simes, strengthFromP } from './calibration';
import {
  COST_CODES,
  isRoundHundred,
  repeatedAmounts,
  roundAmounts,
  type AmountPopularity,
  type FactorResult,
  type PeerBands,
  type ReturnFacts,
} from './factors';
import { money } from './format';
import type { PooledDigits } from './pools';
import { collapseRecurring, describeRecurring, type CollapsedAmounts, type RecurrenceRates } from './recurring';
import { countedComponents, FACTORS, GROUPS } from './registry';
import { COMPONENT_LABELS, COMPONENTS, type ComponentKey, type ScoringSettings } from './settings';

/**
 * What the batch says is ordinary, learned in the run's context pass (server/scoring): the
 * null models of the pattern components.
 */
export interface BatchNulls {
  /** Per line code: returns carrying it, and returns with a recurring group on it. */
  recurrence: RecurrenceRates;
  /** Per line code: [amounts >= 100 of whole-unit filers, round among them, amounts >= 100 of filers with cents, round among them]. */
  round: Record<string, readonly [number, number, number, number]>;
  /** Per amount (absolute cents, >= the repeat minimum, seen on two or more returns or taxpayers): [slots among whole-unit filers, slots among filers with cents, taxpayers]. */
  popularity: ReadonlyMap<number, readonly [number, number, number]>;
  /** All slots (one per return, line code and amount >= the repeat minimum): [whole-unit filers, filers with cents]. */
  slots: readonly [number, number];
}

/** What scoring knows beyond the return itself. */
export interface ScoreContext {
  settings: ScoringSettings;
  peers: PeerBands;
  /** The preparer's pooled digits (their other clients' returns in the batch, this return left out), if any. */
  preparer: (PooledDigits & { firstDigitCounts?: number[] }) | null;
  /** The taxpayer's pooled digits over their other years on file, if any. */
  history: PooledDigits | null;
  /** The batch's null models; absent, conservative fixed rates stand in (docs/methods.md "Scoring"). */
  batch?: BatchNulls | null;
  /** Amounts also on other clients' returns of the same preparer, and that preparer's share of the batch's other taxpayers. */
  sharing?: { shared: ReadonlySet<number>; poolShare: number } | null;
}

/** The result: the stored breakdown plus the figures the queue sorts by. */
export interface ReturnScore {
  breakdown: ScoreBreakdown;
  riskScore: number;
  amountAtStakeCents: number;
  /** risk score × amount at stake, in currency units (2 decimals). */
  priority: number;
}

/** Evidence text the run's finishing step replaces with the batch q-value (server/scoring). */
export const PENDING_Q_TEXT = 'Across the batch: q-value pending.';

/** Round-hundred rate for an amount of 100 or more when the batch has not been learned (about P(00) for three-digit whole units). */
const FALLBACK_ROUND_RATE = 0.0125;

/** Everything the factor records read about one return (computed once). */
export interface PrepareResult {
  facts: ReturnFacts;
  totals: ReturnTotals;
  ctx: ScoreContext;
  p: ScoringSettings['params'];
  collapsed: CollapsedAmounts;
  wholeUnit: boolean;
  digitResult: FactorResult & { p: number | null };
  roundResult: FactorResult & { p: number | null };
  repeatResult: FactorResult & { p: number | null; pWithin: number | null; pShared: number | null };
  /** First- and second-digit p-values. */
  digitPs: [number | null, number | null];
  poolResult(what: string, pool: PooledDigits | null): FactorResult;
  firstDigitCounts: number[];
  /** Totals of each business cost line. */
  costs: Partial<Record<(typeof COST_CODES)[number], number>>;
  digitSnapshot: ScoreBreakdown['digits'];
}

const counter = new DigitCounter();

/** What a batch's null models give every return alike, worked out once per batch (and recurrence gate). */
interface BatchDerived {
  minRate: number;
  /** Which line codes carry recurring bills often enough to count a schedule once. */
  gated: RecurrenceRates;
  /** The batch's overall round-hundred rate: [whole-unit filers, filers with cents]. */
  overallRound: [number, number];
}
const derivedOf = new WeakMap<BatchNulls, BatchDerived>();

function batchDerived(batch: BatchNulls, minRate: number): BatchDerived {
  const cached = derivedOf.get(batch);
  if (cached && cached.minRate === minRate) return cached;
  const gated: RecurrenceRates = Object.fromEntries(
    Object.entries(batch.recurrence).map(([c, r]) => [
      c,
      r.returns > 0 && r.recurring / r.returns >= minRate ? { returns: 1, recurring: 1 } : { returns: 1, recurring: 0 },
    ]),
  );
  const overall = (whole: boolean) => {
    if (!batch.round) return FALLBACK_ROUND_RATE;
    let n = 0;
    let k = 0;
    for (const r of Object.values(batch.round)) {
      n += whole ? r[0] : r[2];
      k += whole ? r[1] : r[3];
    }
    return shrunkRate(k, n, FALLBACK_ROUND_RATE, 100);
  };
  const d: BatchDerived = { minRate, gated, overallRound: [overall(true), overall(false)] };
  derivedOf.set(batch, d);
  return d;
}

function poolSnapshot(p: (PooledDigits & { firstDigitCounts?: number[] }) | null): PoolSnapshot | null {
  if (!p) return null;
  return {
    n: p.n,
    mad: p.mad,
    conformity: p.conformity,
    verdict: p.verdict,
    zScore: p.zScore,
    judgedBy: p.judgedBy,
    ...(p.firstDigitCounts ? { firstDigitCounts: p.firstDigitCounts } : {}),
  };
}

function poolEvidence(what: string, pool: PooledDigits | null): FactorResult {
  const zero = { stakeIncomeCents: 0, stakeTaxCents: 0 };
  if (!pool || pool.judgedBy === 'none' || pool.p === null || pool.p === undefined)
    return { strength: 0, evidence: `Too few amounts ${what} for a pooled digit test.`, ...zero };
  const fixed = pool.judgedBy === 'fixed' ? `; MAD ${pool.mad?.toFixed(4)}, ${pool.conformity} by the published thresholds (Nigrini 2012)` : '';
  return {
    strength: pool.strength,
    evidence:
      pool.basis === 'clients'
        ? `First digits of ${pool.n} amounts ${what} (this client's own returns left out), against the batch's own digits on the same lines, allowing for the ordinary spread of as many clients drawn at random from the batch: ${formatP(pool.p)}${fixed}.`
        : `First digits of ${pool.n} amounts ${what}, against the batch's own digits on the same lines, allowing for the ordinary spread between pools: ${formatP(pool.p)}${fixed}.`,
    ...zero,
  };
}

/** Is this a whole-unit filer (no itemised amount has cents; at least three amounts)? */
export function isWholeUnitFiler(itemised: readonly CentsLine[]): boolean {
  let n = 0;
  for (const l of itemised) {
    if (l.cents === 0) continue;
    if (l.cents % 100 !== 0) return false;
    n++;
  }
  return n >= 3;
}

/** Computes what the factor records read. Pure. */
export function prepareReturn(facts: ReturnFacts, ctx: ScoreContext): PrepareResult {
  const p = ctx.settings.params;
  const totals = computeTotals(facts.lines);
  const itemised = facts.lines.filter((l) => !l.code.startsWith('tot.') && l.code !== 'tax.refund' && l.cents !== 0);
  const derived = ctx.batch ? batchDerived(ctx.batch, p.recurrenceMinRate) : null;
  const collapsed = collapseRecurring(itemised, derived ? derived.gated : null);
  const wholeUnit = isWholeUnitFiler(itemised);
  const labelOf = (code: LineCode) => LINE_CODE_DEFS[code].label;
  const recurringText = collapsed.recurring.length ? ` (${describeRecurring(collapsed.recurring, labelOf)}: counted once, as a recurring bill)` : '';

  // Digits: first and second digit MAD against their own sample size, combined by Simes.
  // The return's own figures: expenses and deductions, where a filer writes the numbers (wages,
  // interest and withholding come from employers and banks, receipts in periods).
  counter.reset();
  counter.addAll(collapsed.lines.filter((l) => l.code.startsWith('exp.') || l.code.startsWith('ded.')).map((l) => l.cents));
  const summary = summarizeCounter(counter);
  const fd = summary.sizeAware.firstDigit;
  const sd = summary.sizeAware.secondDigit;
  const p1 = fd.n >= SIZE_AWARE_MIN_N.firstDigit ? digitMadPValue('firstDigit', fd.n, fd.mad) : null;
  const p2 = sd.n >= SIZE_AWARE_MIN_N.secondDigit ? digitMadPValue('secondDigit', sd.n, sd.mad) : null;
  const pDigits = p1 === null && p2 === null ? null : simes([p1, p2]);
  const digitResult: FactorResult & { p: number | null } =
    pDigits === null
      ? { strength: 0, evidence: `Too few amounts (${fd.n}) for a digit test of this return${recurringText}.`, stakeIncomeCents: 0, stakeTaxCents: 0, p: null }
      : {
          strength: strengthFromP(pDigits, p.patternPStart, p.patternPFull),
          evidence:
            `First digits of ${fd.n} amounts${recurringText}: MAD ${fd.mad?.toFixed(3)} against ${fd.expectedMad?.toFixed(3)} expected for that many, ${formatP(p1 ?? 1)}` +
            (p2 !== null ? `; second digits of ${sd.n} amounts ${formatP(p2)}` : '') +
            `; both together (Simes) ${formatP(pDigits)}. Judged against chance for this sample size, not the large-sample thresholds.`,
          stakeIncomeCents: 0,
          stakeTaxCents: 0,
          p: pDigits,
        };

  // Round amounts against the batch's rate per line code and kind of filer (this return left out).
  const own = new Map<string, [number, number]>();
  for (const l of collapsed.lines) {
    if (Math.abs(l.cents) < 10_000) continue;
    const o = own.get(l.code) ?? [0, 0];
    o[0]++;
    if (isRoundHundred(l.cents)) o[1]++;
    own.set(l.code, o);
  }
  const roundTable = ctx.batch?.round ?? null;
  const overall = derived ? derived.overallRound[wholeUnit ? 0 : 1] : FALLBACK_ROUND_RATE;
  const rateOf = (code: LineCode) => {
    const r = roundTable?.[code];
    if (!r) return overall;
    const o = own.get(code) ?? [0, 0];
    const n = (wholeUnit ? r[0] : r[2]) - o[0];
    const k = (wholeUnit ? r[1] : r[3]) - o[1];
    return shrunkRate(Math.max(0, k), Math.max(0, n), overall, p.roundPriorStrength);
  };
  const roundRaw = roundAmounts(collapsed.lines, rateOf, p);
  const roundResult = { ...roundRaw, evidence: roundRaw.evidence.replace(/\.$/, `${recurringText}.`) };

  // Repeated and shared amounts against the batch's own amount frequencies.
  const batch = ctx.batch ?? null;
  const pop: AmountPopularity = {
    share(cents, whole, ownSlots) {
      const e = batch?.popularity.get(cents);
      const total = batch ? (whole ? batch.slots[0] : batch.slots[1]) : 0;
      if (!batch || total <= 0) return 1e-4; // conservative stand-in: 1 in 10,000
      const k = Math.max(0, (e ? (whole ? e[0] : e[1]) : 0) - ownSlots);
      return Math.max(k, 0.5) / total;
    },
    otherTaxpayers(cents) {
      const e = batch?.popularity.get(cents);
      return e ? Math.max(0, e[2] - 1) : 0;
    },
  };
  const repeatRaw = repeatedAmounts(collapsed.lines, wholeUnit, pop, ctx.sharing ?? null, p);
  const repeatResult = {
    ...repeatRaw,
    evidence:
      collapsed.recurring.length && repeatRaw.strength === 0
        ? `${repeatRaw.evidence.replace(/\.$/, '')}; ${describeRecurring(collapsed.recurring, labelOf)}: counted once, as a recurring bill.`
        : repeatRaw.evidence,
  };

  const poolResult = (what: string, pool: PooledDigits | null): FactorResult => {
    const r = poolEvidence(what, pool);
    return { ...r, strength: pool && pool.p !== null && pool.p !== undefined ? strengthFromP(pool.p, p.patternPStart, p.patternPFull) : 0 };
  };

  return {
    facts,
    totals,
    ctx,
    p,
    collapsed,
    wholeUnit,
    digitResult,
    roundResult,
    repeatResult,
    digitPs: [p1, p2],
    poolResult,
    firstDigitCounts: Array.from(counter.counts('firstDigit')),
    costs: Object.fromEntries(COST_CODES.map((c) => [c, facts.lines.reduce((a, l) => (l.code === c ? a + l.cents : a), 0)])),
    digitSnapshot: {
      n: fd.n,
      firstDigitCounts: Array.from(counter.counts('firstDigit')),
      mad: fd.mad,
      expectedMad: fd.expectedMad,
      zScore: fd.zScore,
      verdict: fd.verdict,
      secondDigitZ: sd.zScore,
    },
  };
}

/** Scores one return. Pure: the same facts and context always give the same breakdown. */
export function scoreReturn(facts: ReturnFacts, ctx: ScoreContext): ReturnScore {
  const { settings } = ctx;
  const p = settings.params;
  const prep = prepareReturn(facts, ctx);
  const totals = prep.totals;

  const results = Object.fromEntries(COMPONENTS.map((key) => [key, FACTORS[key].run(prep)])) as Record<ComponentKey, FactorResult & { p?: number | null }>;
  // The pattern evidence of the return as one test, with the q-value placeholder the run's finishing step fills in.
  const patternP = simes([prep.digitPs[0], prep.digitPs[1], prep.roundResult.p, prep.repeatResult.pWithin, prep.repeatResult.pShared]);
  results.digits = {
    ...results.digits,
    evidence: `${results.digits.evidence} All pattern tests of this return together (Simes): ${formatP(patternP)}. ${PENDING_Q_TEXT}`,
  };

  // A group adds only its strongest member's points.
  const counted = countedComponents(COMPONENTS.map((key) => ({ key, full: settings.weights[key] * results[key].strength })));

  const components: ComponentResult[] = COMPONENTS.map((key) => {
    const r = results[key];
    const weight = settings.weights[key];
    const g = FACTORS[key].group;
    const full = weight * r.strength;
    const counts = counted.has(key);
    const note = !counts && full > 0 && g ? ` (${GROUPS[g]}: only the strongest of this group adds points; ${round1(full)} not added.)` : '';
    return { key, label: COMPONENT_LABELS[key], weight, strength: round3(r.strength), points: counts ? round1(full) : 0, evidence: r.evidence + note };
  });
  const riskScore = Math.min(100, round1(components.reduce((s, c) => s + c.points, 0)));

  // Amount at stake: strongest income concern, plus tax directly at stake.
  let stakeIncome = 0;
  let stakeFrom: ComponentKey | null = null;
  let stakeTax = 0;
  for (const key of Object.keys(results) as ComponentKey[]) {
    const r = results[key];
    if (r.strength <= 0) continue;
    stakeTax += r.stakeTaxCents;
    if (r.stakeIncomeCents > stakeIncome) {
      stakeIncome = r.stakeIncomeCents;
      stakeFrom = key;
    }
  }
  // Patterns alone (digits, round, bunching, repeats) point at itemised figures as a whole.
  const patternStrength = Math.max(
    results.digits.strength,
    results.roundAmounts.strength,
    results.thresholdBunching.strength,
    results.repeatedAmounts.strength,
    results.preparerDigits.strength,
  );
  const patternIncome = Math.round(p.patternStakeShare * patternStrength * (totals.businessExpenses + totals.deductions));
  if (patternIncome > stakeIncome) {
    stakeIncome = patternIncome;
    stakeFrom = null;
  }
  const extraTax = computeTax(totals.taxable + stakeIncome) - computeTax(totals.taxable);
  const amountAtStakeCents = Math.max(0, extraTax + stakeTax);
  const stakeBasis =
    amountAtStakeCents === 0
      ? 'No amount at stake estimated.'
      : `Tax on ${money(stakeIncome)} of income ${stakeFrom ? `(${COMPONENT_LABELS[stakeFrom].toLowerCase()})` : `(${Math.round(p.patternStakeShare * 100)} % of itemised expenses and deductions, scaled by the strongest digit or pattern signal)`}` +
        (stakeTax ? ` plus ${money(stakeTax)} of tax directly at stake` : '') +
        ` = ${money(amountAtStakeCents)}. An estimate for ordering work, not an assessment.`;

  const breakdown: ScoreBreakdown = {
    riskScore,
    components,
    digits: prep.digitSnapshot,
    preparerPool: poolSnapshot(ctx.preparer),
    historyPool: poolSnapshot(ctx.history),
    amountAtStakeCents,
    stakeBasis,
    totals: {
      incomeCents: totals.income,
      deductionsCents: totals.deductions,
      taxableCents: totals.taxable,
      taxCents: totals.tax,
      withheldCents: totals.withheld,
      refundCents: totals.reported.refund ?? totals.refund,
    },
    selectionCut: settings.selectionCut,
    // Under a capacity the run's finishing step selects, once every score is known (shared/programme/selection.ts).
    selected: !settings.capacity && riskScore >= settings.selectionCut,
    // q is 1 until the run's finishing step has every p-value of the batch (server/scoring).
    pattern: { p: patternP, q: 1 },
  };
  return { breakdown, riskScore, amountAtStakeCents, priority: Math.round(riskScore * amountAtStakeCents) / 100 };
}

function round1(x: number) {
  return Math.round(x * 10) / 10;
}
function round3(x: number) {
  return Math.round(x * 1000) / 1000;
}
