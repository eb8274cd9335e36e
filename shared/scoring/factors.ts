/**
 * The rule-based risk factors (docs/methods.md#risk-factors). Each is a pure function of one
 * return's facts and the profile's parameters, and answers with a strength 0–1, evidence a
 * person can read, and (where it can) an estimate of the income an adjustment could add.
 * A factor that does not apply says so with strength 0, so the breakdown explains every line.
 */
import { binomialUpperTail } from '../digits';
import { computeTotals, STATEMENT_KIND_LINE, type CentsLine, type LineCode, type ReturnTotals, type StatementKind } from '../returns/line-codes';
import { clamp01, money, pct } from './format';
import type { ScoringSettings } from './settings';

type Params = ScoringSettings['params'];

/** One return's facts as scoring sees them. */
export interface ReturnFacts {
  taxYear: number;
  activityCode: string;
  lines: readonly CentsLine[];
  statements: readonly { kind: StatementKind; cents: number }[];
  /** The taxpayer's other returns on file (other tax years), any order. */
  history: readonly { taxYear: number; totals: ReturnTotals }[];
}

/** What one factor found. */
export interface FactorResult {
  strength: number;
  evidence: string;
  /** Income (cents) an adjustment could add if the concern is borne out; 0 when none. */
  stakeIncomeCents: number;
  /** Tax (cents) directly at stake (e.g. an over-claimed refund); 0 when none. */
  stakeTaxCents: number;
}

const none = (evidence: string): FactorResult => ({ strength: 0, evidence, stakeIncomeCents: 0, stakeTaxCents: 0 });

/** Lines whose amounts are bookkeeping figures (totals and the refund are derived from them). */
export function itemisedAmounts(lines: readonly CentsLine[]): number[] {
  const out: number[] = [];
  for (const l of lines) if (!l.code.startsWith('tot.') && l.code !== 'tax.refund') out.push(l.cents);
  return out;
}

/** Totals do not add up: reported tot.income, tot.deductions and tax.refund vs recomputed. */
export function totalsMismatch(t: ReturnTotals, p: Params): FactorResult {
  const checks: { name: string; reported: number | null; computed: number; favoursTaxpayer: (d: number) => boolean }[] = [
    { name: 'total income', reported: t.reported.income, computed: t.income, favoursTaxpayer: (d) => d < 0 },
    { name: 'total deductions', reported: t.reported.deductions, computed: t.deductions, favoursTaxpayer: (d) => d > 0 },
    { name: 'refund', reported: t.reported.refund, computed: t.refund, favoursTaxpayer: (d) => d > 0 },
  ];
  const found: string[] = [];
  let strength = 0;
  let stakeIncome = 0;
  let stakeTax = 0;
  for (const c of checks) {
    if (c.reported === null) continue;
    const diff = c.reported - c.computed;
    if (Math.abs(diff) <= p.totalsToleranceCents) continue;
    found.push(`reported ${c.name} ${money(c.reported)} but its lines give ${money(c.computed)} (difference ${money(diff)})`);
    // A difference that favours the taxpayer matters more than one that does not.
    const rel = Math.abs(diff) / Math.max(Math.abs(c.computed), 100_000);
    strength = Math.max(strength, c.favoursTaxpayer(diff) ? 0.6 + 0.4 * clamp01(rel / 0.1) : 0.3);
    if (c.favoursTaxpayer(diff)) {
      if (c.name === 'refund') stakeTax += Math.abs(diff);
      else stakeIncome += Math.abs(diff);
    }
  }
  if (!found.length) return none(`Totals add up (within ${money(p.totalsToleranceCents)}).`);
  return { strength, evidence: `${found.join('; ')} (tolerance ${money(p.totalsToleranceCents)}).`, stakeIncomeCents: stakeIncome, stakeTaxCents: stakeTax };
}

/** Income below third-party statements, per kind of statement. */
export function incomeBelowStatements(f: ReturnFacts, p: Params): FactorResult {
  if (!f.statements.length) return none('No third-party statements on file for this year.');
  const byKind = new Map<StatementKind, number>();
  for (const s of f.statements) byKind.set(s.kind, (byKind.get(s.kind) ?? 0) + s.cents);
  const reportedBy = (code: LineCode) => f.lines.reduce((a, l) => (l.code === code ? a + l.cents : a), 0);
  const found: string[] = [];
  let strength = 0;
  let stake = 0;
  for (const [kind, stated] of byKind) {
    const reported = reportedBy(STATEMENT_KIND_LINE[kind]);
    const shortfall = stated - reported;
    const tolerance = Math.max(p.statementShortfallMinCents, Math.round(p.statementShortfallShare * stated));
    if (shortfall <= tolerance) continue;
    found.push(`${kind} reported ${money(reported)} against ${money(stated)} on statements (short by ${money(shortfall)}, ${pct(shortfall / stated)})`);
    // Third-party figures are hard evidence: a 10 % shortfall already counts strongly.
    strength = Math.max(strength, clamp01(0.6 + (2 * shortfall) / stated));
    stake += shortfall;
  }
  if (!found.length) return none('Reported income matches the third-party statements.');
  return { strength, evidence: `${found.join('; ')}.`, stakeIncomeCents: stake, stakeTaxCents: 0 };
}

/** Per income band, the percentile of each deduction's share of income among peers. */
export interface PeerBands {
  bandOf(incomeCents: number): string;
  limits: Record<string, { charity: number | null; medical: number | null; n: number }>;
}

/** Income bands for peer comparison (Aldermere's, invented): edges in whole units. */
export const INCOME_BAND_EDGES = [20_000, 50_000, 100_000, 250_000];

/** Band name of an income. */
export function incomeBand(incomeCents: number): string {
  const units = incomeCents / 100;
  let lo = 0;
  for (const e of INCOME_BAND_EDGES) {
    if (units < e) return `${lo.toLocaleString('en-US')}–${e.toLocaleString('en-US')}`;
    lo = e;
  }
  return `${lo.toLocaleString('en-US')}+`;
}

/** Builds peer percentiles from many returns' figures (returns with positive income only). */
export function buildPeerBands(all: readonly Pick<ReturnTotals, 'income' | 'charity' | 'medical'>[], p: Params): PeerBands {
  const shares = new Map<string, { charity: number[]; medical: number[] }>();
  for (const t of all) {
    if (t.income <= 0) continue;
    const b = incomeBand(t.income);
    const s = shares.get(b) ?? { charity: [], medical: [] };
    s.charity.push(t.charity / t.income);
    s.medical.push(t.medical / t.income);
    shares.set(b, s);
  }
  const q = (xs: number[]) => {
    if (xs.length < p.deductionMinPeers) return null;
    const sorted = [...xs].sort((a, b) => a - b);
    return sorted[Math.min(sorted.length - 1, Math.floor(p.deductionPercentile * sorted.length))];
  };
  const limits: PeerBands['limits'] = {};
  for (const [b, s] of shares) limits[b] = { charity: q(s.charity), medical: q(s.medical), n: s.charity.length };
  return { bandOf: incomeBand, limits };
}

/** Deductions large against income, against peers in the same income band. */
export function deductionsLarge(t: ReturnTotals, peers: PeerBands, p: Params): FactorResult {
  if (t.deductions <= 0) return none('No deductions claimed.');
  if (t.income <= 0) {
    return {
      strength: 0.7,
      evidence: `Deductions of ${money(t.deductions)} claimed against no positive income.`,
      stakeIncomeCents: t.deductions,
      stakeTaxCents: 0,
    };
  }
  const band = peers.bandOf(t.income);
  const lim = peers.limits[band];
  if (!lim) return none(`Too few peers in the income band ${band} to compare deductions.`);
  const found: string[] = [];
  let strength = 0;
  let stake = 0;
  for (const [key, label] of [
    ['charity', 'charitable gifts'],
    ['medical', 'medical costs'],
  ] as const) {
    const limit = lim[key];
    const amount = t[key];
    if (limit === null || amount <= 0) continue;
    const share = amount / t.income;
    if (share <= limit) continue;
    found.push(`${label} are ${pct(share, 1)} of income; the ${Math.round(p.deductionPercentile * 100)}th percentile of ${lim.n} peers with income ${band} is ${pct(limit, 1)}`);
    // Just above the percentile is where 5 % of typical peers sit by construction, and ordinary
    // medical bills have a long tail: strength grows with the log of the excess, full at 8×.
    strength = Math.max(strength, clamp01(Math.log(share / Math.max(limit, 0.0001)) / Math.log(8)));
    stake += amount - Math.round(limit * t.income);
  }
  if (!found.length) return none(`Deductions are within the usual range for income ${band}.`);
  return { strength, evidence: `${found.join('; ')}.`, stakeIncomeCents: stake, stakeTaxCents: 0 };
}

/** Business expenses near or above receipts. */
export function expensesNearReceipts(t: ReturnTotals, p: Params): FactorResult {
  if (t.businessExpenses <= 0) return none('No business expenses claimed.');
  if (t.receipts <= 0) {
    return {
      strength: 0.8,
      evidence: `Business expenses of ${money(t.businessExpenses)} claimed with no business receipts.`,
      stakeIncomeCents: t.businessExpenses,
      stakeTaxCents: 0,
    };
  }
  const ratio = t.businessExpenses / t.receipts;
  if (ratio < p.expenseRatio) return none(`Business expenses are ${pct(ratio)} of receipts (threshold ${pct(p.expenseRatio)}).`);
  return {
    strength: clamp01(0.25 + (ratio - p.expenseRatio) / 0.4),
    evidence: `Business expenses are ${pct(ratio)} of receipts (threshold ${pct(p.expenseRatio)}): ${money(t.businessExpenses)} against ${money(t.receipts)}.`,
    stakeIncomeCents: Math.max(0, t.businessExpenses - Math.round(p.typicalExpenseRatio * t.receipts)),
    stakeTaxCents: 0,
  };
}

/** Business losses in most of the last years (this year and the ones before it on file). */
export function repeatedLosses(f: ReturnFacts, t: ReturnTotals, p: Params): FactorResult {
  const years = [{ taxYear: f.taxYear, totals: t }, ...f.history.filter((h) => h.taxYear < f.taxYear && h.taxYear > f.taxYear - p.lossWindowYears)];
  const withBusiness = years.filter((y) => y.totals.receipts > 0 || y.totals.businessExpenses > 0);
  if (!withBusiness.length) return none('No business activity reported.');
  const lossYears = withBusiness.filter((y) => y.totals.receipts - y.totals.businessExpenses < 0).map((y) => y.taxYear).sort();
  if (lossYears.length < p.lossYears) {
    return none(`${lossYears.length} business loss year${lossYears.length === 1 ? '' : 's'} in the last ${p.lossWindowYears} on file (threshold ${p.lossYears}).`);
  }
  const thisLoss = Math.max(0, t.businessExpenses - t.receipts);
  return {
    strength: clamp01(0.5 + (lossYears.length - p.lossYears) * 0.25),
    evidence: `Business losses in ${lossYears.length} of the last ${p.lossWindowYears} years on file (${lossYears.join(', ')}; threshold ${p.lossYears}).`,
    stakeIncomeCents: thisLoss,
    stakeTaxCents: 0,
  };
}

/** Cash-heavy activity code. */
export function cashHeavy(f: ReturnFacts, p: Params): FactorResult {
  if (!p.cashHeavyActivities.includes(f.activityCode as never)) return none(`Activity "${f.activityCode}" is not on the office's cash-heavy list.`);
  return { strength: 1, evidence: `Activity "${f.activityCode}" is on the office's cash-heavy list (${p.cashHeavyActivities.join(', ')}).`, stakeIncomeCents: 0, stakeTaxCents: 0 };
}

/** Excess round amounts: amounts >= 100 whose whole-unit part ends in 00, vs Binomial(k, 0.01). */
export function roundAmounts(amounts: readonly number[], p: Params): FactorResult {
  let k = 0;
  let round = 0;
  for (const c of amounts) {
    const a = Math.abs(c);
    if (a < 10_000) continue;
    k++;
    if (Math.floor(a / 100) % 100 === 0) round++;
  }
  if (k === 0) return none('No amounts of 100 or more.');
  const pValue = binomialUpperTail(round, k, 0.01);
  if (pValue >= p.roundTailP) return none(`${round} of ${k} amounts of 100 or more end in 00 (about 1 % expected).`);
  return {
    strength: clamp01(0.4 + (-Math.log10(pValue) - -Math.log10(p.roundTailP)) / 6),
    evidence: `${round} of ${k} amounts of 100 or more end in 00 (${pct(round / k)}; about 1 % expected; binomial tail p = ${pValue.toExponential(1)}).`,
    stakeIncomeCents: 0,
    stakeTaxCents: 0,
  };
}

/**
 * Amounts bunched just under the office's thresholds: count in [band × T, T) against the
 * share a smooth log-spread of the return's own amounts would put there,
 * log10(1/band) / log10(max/min) (at least one decade), by the binomial tail.
 */
export function thresholdBunching(amounts: readonly number[], p: Params): FactorResult {
  const pos = amounts.map(Math.abs).filter((a) => a >= 100);
  if (pos.length < 5) return none('Too few amounts to look for bunching under thresholds.');
  let lo = Infinity;
  let hi = 0;
  for (const a of pos) {
    if (a < lo) lo = a;
    if (a > hi) hi = a;
  }
  const decades = Math.max(1, Math.log10(hi / lo));
  const pIn = Math.min(0.5, Math.log10(1 / p.bunchingBand) / decades);
  const found: string[] = [];
  let best = 1;
  for (const T of p.thresholdsCents) {
    const from = Math.ceil(p.bunchingBand * T);
    const inBand = pos.filter((a) => a >= from && a < T).length;
    if (inBand < 2) continue;
    const pValue = binomialUpperTail(inBand, pos.length, pIn);
    if (pValue < p.bunchingTailP) {
      found.push(`${inBand} of ${pos.length} amounts lie in [${money(from)}, ${money(T)}) just under ${money(T)} (about ${(pIn * pos.length).toFixed(1)} expected; p = ${pValue.toExponential(1)})`);
      best = Math.min(best, pValue);
    }
  }
  if (!found.length) return none('No bunching just under the office\'s thresholds.');
  return { strength: clamp01(0.5 + (-Math.log10(best) - 2) / 6), evidence: `${found.join('; ')}.`, stakeIncomeCents: 0, stakeTaxCents: 0 };
}

/** A sharp income drop from the previous year on file: |ln(x_t / x_(t-1))| > ln 2 on lines above 5,000. */
export function incomeDrop(f: ReturnFacts, t: ReturnTotals, p: Params): FactorResult {
  const prev = f.history.find((h) => h.taxYear === f.taxYear - 1);
  if (!prev) return none('No return on file for the previous year.');
  const found: string[] = [];
  let strength = 0;
  let stake = 0;
  for (const [label, now, before] of [
    ['wages', t.wages, prev.totals.wages],
    ['business receipts', t.receipts, prev.totals.receipts],
    ['total income', t.income, prev.totals.income],
  ] as const) {
    if (before <= p.incomeDropMinCents) continue;
    const ratio = Math.log(Math.max(now, 1) / before);
    if (-ratio <= p.incomeDropLogRatio) continue;
    found.push(`${label} fell from ${money(before)} in ${f.taxYear - 1} to ${money(now)} (${pct(1 - Math.max(now, 0) / before)} lower)`);
    strength = Math.max(strength, clamp01(0.25 + (-ratio - p.incomeDropLogRatio) / (2 * p.incomeDropLogRatio)));
    stake = Math.max(stake, Math.round((before - Math.max(now, 0)) / 2));
  }
  if (!found.length) return none(`No sharp drop from ${f.taxYear - 1}.`);
  return { strength, evidence: `${found.join('; ')}.`, stakeIncomeCents: stake, stakeTaxCents: 0 };
}

/**
 * Refund large against tax withheld. When the return's own lines give that refund (no tax
 * due, say, on a low income) it is noted at a quarter of the strength: large, but what the
 * rules give.
 */
export function refundLarge(t: ReturnTotals, p: Params): FactorResult {
  const refund = t.reported.refund ?? t.refund;
  if (refund <= 0 || t.withheld <= 0) return none('No refund claimed.');
  const ratio = refund / t.withheld;
  if (ratio <= p.refundRatio) return none(`Refund is ${pct(ratio)} of tax withheld (threshold ${pct(p.refundRatio)}).`);
  const supported = refund <= t.refund + p.totalsToleranceCents;
  const strength = clamp01(0.5 + (ratio - p.refundRatio) / (2 * (1 - p.refundRatio + 0.01)));
  return {
    strength: supported ? strength / 4 : strength,
    evidence:
      `Refund of ${money(refund)} is ${pct(ratio)} of tax withheld ${money(t.withheld)} (threshold ${pct(p.refundRatio)})` +
      (supported ? '; the return\'s lines give this refund (tax due is low).' : `; the lines give ${money(t.refund)}.`),
    stakeIncomeCents: 0,
    stakeTaxCents: 0,
  };
}

/**
 * The same amount repeated: on `repeatMinCount` or more lines of this return, or also on
 * other clients' returns of the same preparer (`sharedWithClients`).
 */
export function repeatedAmounts(amounts: readonly number[], sharedWithClients: ReadonlySet<number>, p: Params): FactorResult {
  const counts = new Map<number, number>();
  for (const c of amounts) {
    const a = Math.abs(c);
    if (a < p.repeatMinCents) continue;
    counts.set(a, (counts.get(a) ?? 0) + 1);
  }
  const repeated = [...counts].filter(([, n]) => n >= p.repeatMinCount).sort((a, b) => b[1] - a[1] || b[0] - a[0]);
  const shared = [...counts.keys()].filter((a) => sharedWithClients.has(a)).sort((a, b) => b - a);
  if (!repeated.length && !shared.length) return none('No amount of note repeats.');
  const parts: string[] = [];
  if (repeated.length) parts.push(`on this return: ${repeated.slice(0, 4).map(([a, n]) => `${money(a)} × ${n}`).join(', ')}${repeated.length > 4 ? ` and ${repeated.length - 4} more` : ''}`);
  if (shared.length) parts.push(`also on other clients' returns of the same preparer: ${shared.slice(0, 4).map(money).join(', ')}${shared.length > 4 ? ` and ${shared.length - 4} more` : ''}`);
  // A repeat on this return weighs twice a coincidence with another client's return.
  const extra = repeated.reduce((s, [, n]) => s + n - 1, 0);
  return { strength: clamp01(0.2 * extra + 0.1 * shared.length), evidence: `Repeated amounts ${parts.join('; ')}.`, stakeIncomeCents: 0, stakeTaxCents: 0 };
}

export { computeTotals };
