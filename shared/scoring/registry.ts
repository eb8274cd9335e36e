/**
 * Every risk factor as one record: its key, its words, its default weight, the group it
 * shares points with, the profile parameters it reads, and the function that judges a
 * return. Adding a factor is one entry here (and its key in COMPONENTS, the stored order);
 * scoring, screens and profiles read this list (docs/methods.md, "Scoring").
 */
import type { ComponentKey, ScoringSettings } from './settings';
import {
  cashHeavy,
  deductionsLarge,
  expensesNearReceipts,
  incomeBelowStatements,
  incomeDrop,
  refundLarge,
  repeatedLosses,
  thresholdBunching,
  totalsMismatch,
  type FactorResult,
} from './factors';
import type { PrepareResult } from './score-return';

type Params = ScoringSettings['params'];

/**
 * Groups of components that look at one concern from several sides; a group adds at most
 * its strongest member's points, so one concern is not counted twice.
 */
export const GROUPS = {
  madeUp: 'Figures look made up',
  related: 'Figures of related returns',
  totals: 'Totals and refund',
  losses: 'Business losses',
} as const;
export type GroupKey = keyof typeof GROUPS;

/** One risk factor. */
export interface FactorRecord {
  key: ComponentKey;
  label: string;
  /** Points at full strength in the default profile. */
  defaultWeight: number;
  group: GroupKey | null;
  /** Profile parameters the factor reads (for the profile screen and docs). */
  params: readonly (keyof Params)[];
  /** Judges one prepared return. */
  run(r: PrepareResult): FactorResult & { p?: number | null };
}

/** A pooled digit test of related returns (the taxpayer's other years, or the preparer's other clients). */
function pooledDigits(key: ComponentKey, label: string, defaultWeight: number, where: string, pool: 'history' | 'preparer'): FactorRecord {
  return {
    key,
    label,
    defaultWeight,
    group: 'related',
    params: ['pooledFixedThresholdMinN', 'patternPStart', 'patternPFull'],
    run: (r) => r.poolResult(where, r.ctx[pool]),
  };
}

/** The factors, in COMPONENTS order. */
export const FACTORS: Readonly<Record<ComponentKey, FactorRecord>> = {
  digits: {
    key: 'digits',
    label: 'Digit pattern of this return',
    defaultWeight: 45,
    group: 'madeUp',
    params: ['patternPStart', 'patternPFull'],
    run: (r) => r.digitResult,
  },
  historyDigits: pooledDigits('historyDigits', "Digit pattern of the taxpayer's other years on file", 10, "on the taxpayer's other returns on file", 'history'),
  preparerDigits: pooledDigits(
    'preparerDigits',
    "Digit pattern of the preparer's other returns",
    35,
    "on the preparer's other returns in the batch",
    'preparer',
  ),
  totalsMismatch: {
    key: 'totalsMismatch',
    label: 'Totals do not add up',
    defaultWeight: 45,
    group: 'totals',
    params: ['totalsToleranceCents'],
    run: (r) => totalsMismatch(r.totals, r.p),
  },
  incomeBelowStatements: {
    key: 'incomeBelowStatements',
    label: 'Income below third-party statements',
    defaultWeight: 50,
    group: null,
    params: ['statementShortfallMinCents', 'statementShortfallShare'],
    run: (r) => incomeBelowStatements(r.facts, r.p),
  },
  deductionsLarge: {
    key: 'deductionsLarge',
    label: 'Deductions or business costs large against peers',
    defaultWeight: 30,
    group: null,
    params: ['deductionPercentile', 'deductionMinPeers'],
    run: (r) => deductionsLarge(r.totals, r.ctx.peers, r.p, r.costs, r.collapsed.recurring, r.facts.history),
  },
  expensesNearReceipts: {
    key: 'expensesNearReceipts',
    label: 'Business expenses near receipts',
    defaultWeight: 25,
    group: 'losses',
    params: ['expenseRatio', 'typicalExpenseRatio'],
    run: (r) => expensesNearReceipts(r.totals, r.p),
  },
  repeatedLosses: {
    key: 'repeatedLosses',
    label: 'Business losses in most recent years',
    defaultWeight: 15,
    group: 'losses',
    params: ['lossYears', 'lossWindowYears'],
    run: (r) => repeatedLosses(r.facts, r.totals, r.p),
  },
  cashHeavy: {
    key: 'cashHeavy',
    label: 'Cash-heavy activity',
    defaultWeight: 1,
    group: null,
    params: ['cashHeavyActivities'],
    run: (r) => cashHeavy(r.facts, r.p),
  },
  roundAmounts: {
    key: 'roundAmounts',
    label: 'Excess round amounts',
    defaultWeight: 40,
    group: 'madeUp',
    params: ['roundPriorStrength', 'patternPStart', 'patternPFull'],
    run: (r) => r.roundResult,
  },
  thresholdBunching: {
    key: 'thresholdBunching',
    label: 'Amounts bunched under a threshold',
    defaultWeight: 22,
    group: null,
    params: ['thresholdsCents', 'bunchingBand', 'bunchingTailP'],
    run: (r) => thresholdBunching(r.collapsed.amounts, r.p),
  },
  incomeDrop: {
    key: 'incomeDrop',
    label: 'Sharp income drop',
    defaultWeight: 15,
    group: null,
    params: ['incomeDropLogRatio', 'incomeDropMinCents'],
    run: (r) => incomeDrop(r.facts, r.totals, r.p),
  },
  refundLarge: {
    key: 'refundLarge',
    label: 'Refund large against tax withheld',
    defaultWeight: 12,
    group: 'totals',
    params: ['refundRatio', 'totalsToleranceCents'],
    run: (r) => refundLarge(r.totals, r.p),
  },
  repeatedAmounts: {
    key: 'repeatedAmounts',
    label: 'Same amount repeated',
    defaultWeight: 45,
    group: 'madeUp',
    params: ['repeatMinCents', 'repeatMinCount', 'patternPStart', 'patternPFull'],
    run: (r) => r.repeatResult,
  },
};

/**
 * The components that add points to a score: every one outside a group, and in each group
 * only the member with the most points at full strength (`full` = weight × strength; on a tie
 * the first in the order given). The one place the {@link GROUPS} rule is applied: scoring
 * (score-return.ts) and the Scoring screen's preview (shared/programme/selection.ts) both count
 * through it.
 */
export function countedComponents(raw: readonly { key: ComponentKey; full: number }[]): Set<ComponentKey> {
  const counted = new Set<ComponentKey>();
  const bestOfGroup = new Map<GroupKey, { key: ComponentKey; full: number }>();
  for (const r of raw) {
    const g = FACTORS[r.key].group;
    if (!g) {
      counted.add(r.key);
      continue;
    }
    const best = bestOfGroup.get(g);
    if (!best || r.full > best.full) bestOfGroup.set(g, r);
  }
  for (const b of bestOfGroup.values()) counted.add(b.key);
  return counted;
}
