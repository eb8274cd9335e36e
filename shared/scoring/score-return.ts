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
import { DigitCounter, summarizeCounter } from '../digits';
import { computeTax, computeTotals } from '../returns/line-codes';
import type { ComponentResult, PoolSnapshot, ScoreBreakdown } from './breakdown';
import {
  cashHeavy,
  deductionsLarge,
  expensesNearReceipts,
  incomeBelowStatements,
  incomeDrop,
  itemisedAmounts,
  refundLarge,
  repeatedAmounts,
  repeatedLosses,
  roundAmounts,
  thresholdBunching,
  totalsMismatch,
  type FactorResult,
  type PeerBands,
  type ReturnFacts,
} from './factors';
import { money } from './format';
import { strengthFromZ, type PooledDigits } from './pools';
import { COMPONENT_LABELS, type ComponentKey, type ScoringSettings } from './settings';

/** What scoring knows beyond the return itself. */
export interface ScoreContext {
  settings: ScoringSettings;
  peers: PeerBands;
  /** The preparer's pooled digits (all their clients' returns on file), if any. */
  preparer: (PooledDigits & { firstDigitCounts?: number[] }) | null;
  /** The taxpayer's pooled digits over every year on file, if more than this one. */
  history: PooledDigits | null;
  /** Amounts (absolute cents) also found on other clients' returns of the same preparer. */
  sharedWithClients: ReadonlySet<number>;
}

/** The result: the stored breakdown plus the figures the queue sorts by. */
export interface ReturnScore {
  breakdown: ScoreBreakdown;
  riskScore: number;
  amountAtStakeCents: number;
  /** risk score × amount at stake, in currency units (2 decimals). */
  priority: number;
}

const counter = new DigitCounter();

function poolSnapshot(p: (PooledDigits & { firstDigitCounts?: number[] }) | null): PoolSnapshot | null {
  if (!p) return null;
  return { n: p.n, mad: p.mad, conformity: p.conformity, verdict: p.verdict, zScore: p.zScore, judgedBy: p.judgedBy, ...(p.firstDigitCounts ? { firstDigitCounts: p.firstDigitCounts } : {}) };
}

function poolEvidence(what: string, p: PooledDigits | null): FactorResult {
  const zero = { stakeIncomeCents: 0, stakeTaxCents: 0 };
  if (!p || p.judgedBy === 'none') return { strength: 0, evidence: `Too few amounts ${what} for a pooled digit test.`, ...zero };
  if (p.judgedBy === 'fixed') {
    return { strength: p.strength, evidence: `First digits of ${p.n} amounts ${what}: MAD ${p.mad?.toFixed(4)}, ${p.conformity} by the published thresholds (Nigrini 2012).`, ...zero };
  }
  return { strength: p.strength, evidence: `First digits of ${p.n} amounts ${what}: size-aware z = ${p.zScore?.toFixed(1)} (${p.verdict.replace('_', ' ')}).`, ...zero };
}

/** Scores one return. Pure: the same facts and context always give the same breakdown. */
export function scoreReturn(facts: ReturnFacts, ctx: ScoreContext): ReturnScore {
  const { settings } = ctx;
  const p = settings.params;
  const totals = computeTotals(facts.lines);
  const amounts = itemisedAmounts(facts.lines);

  counter.reset();
  counter.addAll(amounts);
  const summary = summarizeCounter(counter);
  const fd = summary.sizeAware.firstDigit;
  const sd = summary.sizeAware.secondDigit;
  const zs = [fd.zScore, sd.zScore].filter((z): z is number => z !== null);
  const zMax = zs.length ? Math.max(...zs) : null;
  const digitResult: FactorResult =
    fd.verdict === 'too_few'
      ? { strength: 0, evidence: `Too few amounts (${fd.n}) for a digit test of this return.`, stakeIncomeCents: 0, stakeTaxCents: 0 }
      : {
          strength: strengthFromZ(zMax),
          evidence:
            `First digits of ${fd.n} amounts: MAD ${fd.mad?.toFixed(3)} against ${fd.expectedMad?.toFixed(3)} expected for that many ` +
            `(z = ${fd.zScore?.toFixed(1)}, ${fd.verdict.replace('_', ' ')})` +
            (sd.verdict !== 'too_few' ? `; second digits z = ${sd.zScore?.toFixed(1)} (${sd.verdict.replace('_', ' ')})` : '') +
            '. Judged against its own sample size, not the large-sample thresholds.',
          stakeIncomeCents: 0,
          stakeTaxCents: 0,
        };

  const results: Record<ComponentKey, FactorResult> = {
    digits: digitResult,
    historyDigits: poolEvidence('on the taxpayer\'s returns on file', ctx.history),
    preparerDigits: poolEvidence('on the preparer\'s returns', ctx.preparer),
    totalsMismatch: totalsMismatch(totals, p),
    incomeBelowStatements: incomeBelowStatements(facts, p),
    deductionsLarge: deductionsLarge(totals, ctx.peers, p),
    expensesNearReceipts: expensesNearReceipts(totals, p),
    repeatedLosses: repeatedLosses(facts, totals, p),
    cashHeavy: cashHeavy(facts, p),
    roundAmounts: roundAmounts(amounts, p),
    thresholdBunching: thresholdBunching(amounts, p),
    incomeDrop: incomeDrop(facts, totals, p),
    refundLarge: refundLarge(totals, p),
    repeatedAmounts: repeatedAmounts(amounts, ctx.sharedWithClients, p),
  };

  const components: ComponentResult[] = (Object.keys(results) as ComponentKey[]).map((key) => {
    const r = results[key];
    const weight = settings.weights[key];
    return { key, label: COMPONENT_LABELS[key], weight, strength: round3(r.strength), points: round1(weight * r.strength), evidence: r.evidence };
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
  const patternStrength = Math.max(results.digits.strength, results.roundAmounts.strength, results.thresholdBunching.strength, results.repeatedAmounts.strength, results.preparerDigits.strength);
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
    digits: {
      n: fd.n,
      firstDigitCounts: Array.from(counter.counts('firstDigit')),
      mad: fd.mad,
      expectedMad: fd.expectedMad,
      zScore: fd.zScore,
      verdict: fd.verdict,
      secondDigitZ: sd.zScore,
    },
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
    selected: riskScore >= settings.selectionCut,
  };
  return { breakdown, riskScore, amountAtStakeCents, priority: Math.round(riskScore * amountAtStakeCents) / 100 };
}

function round1(x: number) {
  return Math.round(x * 10) / 10;
}
function round3(x: number) {
  return Math.round(x * 1000) / 1000;
}
