/**
 * The rule-based risk factors (docs/methods.md#risk-factors). Each is a pure function of one
 * return's facts and the profile's parameters, and answers with a strength 0–1, evidence a
 * person can read, and (where it can) an estimate of the income an adjustment could add.
 * A factor that does not apply says so with strength 0, so the breakdown explains every line.
 */
// From the one file, not the engine's index: the scoring settings (and so every screen) import
// this module, and the index would bring the whole digit engine into the web bundle.
import { binomialUpperTail } from '../digits/stats';
import { formatP, poissonBinomialUpperTail, poissonUpperTail, simes, strengthFromP } from './calibration';
import { LINE_CODE_DEFS, STATEMENT_KIND_LINE, type CentsLine, type LineCode, type ReturnTotals, type StatementKind } from '../returns/line-codes';
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

/** Per income band, the percentile of each deduction's share of income among peers; per cost line, the percentile of its share of receipts. */
export interface PeerBands {
  bandOf(incomeCents: number): string;
  limits: Record<string, { charity: number | null; medical: number | null; n: number }>;
  /** Per business cost line: the percentile of (line total / receipts) among returns with receipts, and how many. Absent on runs made before version 2. */
  costLimits?: Record<string, { limit: number | null; n: number }>;
  /** Per periodic line: the percentile of (a recurring bill's yearly total / its base) among the batch's recurring bills there. */
  recurringLimits?: Record<string, { limit: number | null; n: number }>;
  /**
   * The ordinary rise of a filer's deductions against their own other years: the percentile
   * of (this year's deduction share / the median share of the filer's other years in the
   * batch) among the batch's returns that have both, and how many. Absent on runs made
   * before it was added (then deductions are judged against peers only).
   */
  deductionRise?: { limit: number | null; n: number };
}

/** A recurring bill with its yearly total, as the peer comparison sees it. */
export interface RecurringBill {
  code: LineCode;
  cents: number;
  count: number;
}

/** What a recurring bill on a line is measured against: receipts for business lines, max(income, 20,000) otherwise. */
export function recurringBase(code: string, t: Pick<ReturnTotals, 'receipts' | 'income'>): number {
  return code.startsWith('exp.business.') || code === 'inc.business.receipts' ? t.receipts : Math.max(t.income, DEDUCTION_BASE_FLOOR_CENTS);
}

/** Income bands for peer comparison (Aldermere's, invented): edges in whole units. */
export const INCOME_BAND_EDGES = [20_000, 50_000, 100_000, 250_000];

/**
 * Deductions are compared as a share of max(income, the first band edge): below 20,000 of
 * income (or with a loss) a ratio to income says little (a retiree with 300 of interest and
 * 900 of medical bills is at 300 %), and the lowest band is judged on the same footing as
 * the next.
 */
export const DEDUCTION_BASE_FLOOR_CENTS = INCOME_BAND_EDGES[0] * 100;

/** Business cost lines compared with peers as a share of receipts. */
export const COST_CODES = ['exp.business.supplies', 'exp.business.vehicle', 'exp.business.travel', 'exp.business.other'] as const;

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

/** One return's figures for peer comparison. */
export interface PeerFigures {
  income: number;
  charity: number;
  medical: number;
  /** Receipts and per-cost-line totals (version 2 on; absent = not compared). */
  receipts?: number;
  costs?: Partial<Record<(typeof COST_CODES)[number], number>>;
  /** Yearly totals of the return's recurring bills, per line (version 2 on). */
  recurring?: Partial<Record<string, number>>;
  /** Taxpayer and tax year, to learn the ordinary year-to-year rise of deductions (absent = not learned). */
  taxpayerId?: string;
  taxYear?: number;
}

/** Deductions as a share of max(income, the floor): the measure peers and the filer's own years are compared on. */
export function deductionShare(t: Pick<ReturnTotals, 'income' | 'deductions'>): number {
  return t.deductions / Math.max(t.income, DEDUCTION_BASE_FLOOR_CENTS);
}

/**
 * The least share of the peer comparison's strength that the filer's own years leave
 * standing (a rule of this project, common practice, no source): a filer at their usual level
 * still counts half, because inflating every year would otherwise set the usual level.
 */
export const OWN_LEVEL_MIN_SHARE = 0.5;

/** Median of a non-empty list. */
function median(xs: readonly number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/**
 * The filer's own usual deduction level: the median deduction share of their other years on
 * file (the median, so one unusual year, claimed or invented, does not set the level); null
 * with no other year.
 */
export function ownDeductionLevel(history: readonly { totals: Pick<ReturnTotals, 'income' | 'deductions'> }[]): { level: number; years: number } | null {
  if (!history.length) return null;
  return { level: median(history.map((h) => deductionShare(h.totals))), years: history.length };
}

/** Builds peer percentiles from many returns' figures. */
export function buildPeerBands(all: readonly PeerFigures[], p: Params): PeerBands {
  const shares = new Map<string, { charity: number[]; medical: number[] }>();
  const costShares = new Map<string, number[]>();
  const recurringShares = new Map<string, number[]>();
  for (const t of all) {
    const base = Math.max(t.income, DEDUCTION_BASE_FLOOR_CENTS);
    const b = incomeBand(Math.max(t.income, 0));
    const s = shares.get(b) ?? { charity: [], medical: [] };
    s.charity.push(t.charity / base);
    s.medical.push(t.medical / base);
    shares.set(b, s);
    if (t.recurring)
      for (const [code, yearly] of Object.entries(t.recurring)) {
        const b = recurringBase(code, { receipts: t.receipts ?? 0, income: t.income });
        if (!yearly || b <= 0) continue;
        const list = recurringShares.get(code) ?? [];
        list.push(yearly / b);
        recurringShares.set(code, list);
      }
    if (t.receipts && t.receipts > 0 && t.costs)
      for (const c of COST_CODES) {
        const list = costShares.get(c) ?? [];
        list.push((t.costs[c] ?? 0) / t.receipts);
        costShares.set(c, list);
      }
  }
  const q = (xs: number[]) => {
    if (xs.length < p.deductionMinPeers) return null;
    const sorted = [...xs].sort((a, b) => a - b);
    return sorted[Math.min(sorted.length - 1, Math.floor(p.deductionPercentile * sorted.length))];
  };
  const limits: PeerBands['limits'] = {};
  for (const [b, s] of shares) limits[b] = { charity: q(s.charity), medical: q(s.medical), n: s.charity.length };
  const costLimits: NonNullable<PeerBands['costLimits']> = {};
  for (const [c, xs] of costShares) costLimits[c] = { limit: q(xs), n: xs.length };
  const recurringLimits: NonNullable<PeerBands['recurringLimits']> = {};
  for (const [c, xs] of recurringShares) recurringLimits[c] = { limit: q(xs), n: xs.length };
  // Year-to-year rise of a filer's deductions: this year against the median of their other years in the batch.
  const byTaxpayer = new Map<string, { taxYear: number; share: number }[]>();
  for (const t of all) {
    if (t.taxpayerId === undefined || t.taxYear === undefined) continue;
    const list = byTaxpayer.get(t.taxpayerId) ?? [];
    list.push({ taxYear: t.taxYear, share: (t.charity + t.medical) / Math.max(t.income, DEDUCTION_BASE_FLOOR_CENTS) });
    byTaxpayer.set(t.taxpayerId, list);
  }
  const rises: number[] = [];
  for (const years of byTaxpayer.values()) {
    if (years.length < 2) continue;
    for (const y of years) {
      const level = median(years.filter((o) => o.taxYear !== y.taxYear).map((o) => o.share));
      if (level > 0) rises.push(y.share / level);
    }
  }
  return { bandOf: incomeBand, limits, costLimits, recurringLimits, deductionRise: { limit: q(rises), n: rises.length } };
}

/**
 * Deductions and business costs large against peers: charitable gifts and medical costs as
 * a share of max(income, 20,000) against the same share's percentile among peers in the
 * same income band; each business cost line as a share of receipts against that line's
 * percentile among returns with receipts (an invented monthly "rent" hides from the pattern
 * tests as a recurring bill, but not from its peers).
 *
 * Gifts and medical costs large against peers count only as far as the filer's deductions
 * are also large against their own other years on file: the median share of those years
 * times the batch's ordinary year-to-year rise ({@link PeerBands.deductionRise}, the same
 * percentile) is a second limit, graded the same way, and the smaller strength counts. A
 * filer who gives or pays a lot every year is at their usual level; a sudden jump is not.
 * With no other year on file, or none with deductions, peers alone judge.
 */
export function deductionsLarge(
  t: ReturnTotals,
  peers: PeerBands,
  p: Params,
  costs?: Partial<Record<(typeof COST_CODES)[number], number>>,
  recurring: readonly RecurringBill[] = [],
  history: readonly { totals: Pick<ReturnTotals, 'income' | 'deductions'> }[] = [],
): FactorResult {
  const found: string[] = [];
  let strength = 0;
  let stake = 0;
  const base = Math.max(t.income, DEDUCTION_BASE_FLOOR_CENTS);
  const deductionFound: string[] = [];
  let deductionStrength = 0;
  let deductionStake = 0;
  const band = peers.bandOf(Math.max(t.income, 0));
  const lim = peers.limits[band];
  // Just above the percentile is where 5 % of typical peers sit by construction, and medical
  // bills have a long tail: strength grows with the log of the excess, full at 8×.
  const grade = (share: number, limit: number) => clamp01(Math.log(share / Math.max(limit, 0.0001)) / Math.log(8));
  if (t.deductions > 0 && lim) {
    for (const [key, label] of [
      ['charity', 'charitable gifts'],
      ['medical', 'medical costs'],
    ] as const) {
      const limit = lim[key];
      const amount = t[key];
      if (limit === null || amount <= 0) continue;
      const share = amount / base;
      if (share <= limit) continue;
      const of = t.income >= DEDUCTION_BASE_FLOOR_CENTS ? 'income' : `${money(DEDUCTION_BASE_FLOOR_CENTS)} (the floor used below that income)`;
      deductionFound.push(
        `${label} are ${pct(share, 1)} of ${of}; the ${Math.round(p.deductionPercentile * 100)}th percentile of ${lim.n} peers with income ${band} is ${pct(limit, 1)}`,
      );
      deductionStrength = Math.max(deductionStrength, grade(share, limit));
      deductionStake += amount - Math.round(limit * base);
    }
  }
  // Version 3 on: a recurring deduction (a standing monthly gift, a care plan) is a deduction like
  // any other, so its size against the recurring bills on its line is weighed against the filer's
  // own other years below, as the peers' check is; a business bill answers to the peers alone.
  const recurringDeductions = p.recurringOwnLevel ? recurring.filter((b) => b.code.startsWith('ded.')) : [];
  for (const b of recurringDeductions) {
    const r = recurringAgainstPeers(b, t, peers, p);
    if (!r) continue;
    deductionFound.push(r.text);
    deductionStrength = Math.max(deductionStrength, r.strength);
    deductionStake += r.stake;
  }
  // Large against peers may still be the filer's usual level (a standing gift, a long illness):
  // the deductions also have to be large against the filer's own other years on file, beyond
  // the rise that ordinary filers in the batch show from year to year.
  // A filer who inflates every year sets their own level too, so their own years take off at
  // most half of what the peers give (OWN_LEVEL_MIN_SHARE).
  const own = ownDeductionLevel(history);
  const rise = peers.deductionRise;
  if (deductionFound.length && own && own.level > 0 && rise && rise.limit !== null) {
    const now = deductionShare(t);
    const ownLimit = own.level * rise.limit;
    // Steeper than the peer grade (full at 2.5 × the limit, as for a recurring bill): a jump
    // beyond the filer's own usual rise is one decision, not the tail of a spread.
    const ownGrade = Math.max(clamp01(Math.log(now / Math.max(ownLimit, 0.0001)) / Math.log(2.5)), OWN_LEVEL_MIN_SHARE * deductionStrength);
    const years = `${own.years} other year${own.years === 1 ? '' : 's'} on file`;
    const against = `deductions in the filer's ${years} were ${pct(own.level, 1)} of income (median; income counted as at least ${money(DEDUCTION_BASE_FLOOR_CENTS)}), and ${Math.round(p.deductionPercentile * 100)} % of ${rise.n.toLocaleString('en-US')} returns in the batch stay below ${rise.limit.toFixed(1)} times their filer's other years`;
    if (ownGrade < deductionStrength) {
      const times = (now / own.level).toFixed(1);
      deductionFound.push(
        now <= ownLimit
          ? `${against}; this year's ${pct(now, 1)} (${times} times) is within that, near the filer's usual level: counted at half strength`
          : `${against}; this year's ${pct(now, 1)} is ${times} times that: counted only as far as it goes beyond that rise (at least half)`,
      );
      deductionStake = Math.round((deductionStake * ownGrade) / deductionStrength);
      deductionStrength = ownGrade;
    } else {
      deductionFound.push(`${against}; this year's ${pct(now, 1)} is ${(now / own.level).toFixed(1)} times that`);
    }
  }
  found.push(...deductionFound);
  strength = deductionStrength;
  stake += deductionStake;
  if (costs && t.receipts > 0 && peers.costLimits) {
    for (const c of COST_CODES) {
      const cl = peers.costLimits[c];
      const amount = costs[c] ?? 0;
      if (!cl || cl.limit === null || amount <= 0) continue;
      const share = amount / t.receipts;
      if (share <= cl.limit) continue;
      found.push(
        `${LINE_CODE_DEFS[c].label.toLowerCase()} are ${pct(share, 1)} of receipts; the ${Math.round(p.deductionPercentile * 100)}th percentile of ${cl.n} returns with receipts is ${pct(cl.limit, 1)}`,
      );
      strength = Math.max(strength, grade(share, cl.limit));
      stake += amount - Math.round(cl.limit * t.receipts);
    }
  }
  // A recurring bill counts once in the pattern tests; its size still answers to the other recurring bills on that line.
  for (const b of recurring) {
    if (recurringDeductions.includes(b)) continue;
    const r = recurringAgainstPeers(b, t, peers, p);
    if (!r) continue;
    found.push(r.text);
    strength = Math.max(strength, r.strength);
    stake += r.stake;
  }
  if (!found.length)
    return none(
      t.deductions > 0 || t.businessExpenses > 0
        ? `Deductions and business costs are within the usual range of peers (income ${band}).`
        : 'No deductions claimed.',
    );
  return { strength, evidence: `${found.join('; ')}.`, stakeIncomeCents: stake, stakeTaxCents: 0 };
}

/** A recurring bill's yearly total against the batch's recurring bills on its line (null: within them, or nothing to compare). */
function recurringAgainstPeers(b: RecurringBill, t: ReturnTotals, peers: PeerBands, p: Params): { text: string; strength: number; stake: number } | null {
  const rl = peers.recurringLimits?.[b.code];
  const base = recurringBase(b.code, t);
  if (!rl || rl.limit === null || base <= 0) return null;
  const yearly = b.cents * b.count;
  const share = yearly / base;
  if (share <= rl.limit) return null;
  return {
    text: `${b.count} equal payments of ${money(b.cents)} on ${LINE_CODE_DEFS[b.code].label.toLowerCase()} come to ${money(yearly)}, ${pct(share, 1)} of ${b.code.startsWith('exp.') ? 'receipts' : 'income'}; the ${Math.round(p.deductionPercentile * 100)}th percentile of ${rl.n} recurring bills on that line in the batch is ${pct(rl.limit, 1)}`,
    // Steeper than the other peer checks (full at 2.5 × the percentile): a bill is one decision,
    // and a made-up monthly figure is usually well above what ordinary bills on that line come to.
    strength: clamp01(Math.log(share / Math.max(rl.limit, 0.0001)) / Math.log(2.5)),
    stake: yearly - Math.round(rl.limit * base),
  };
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
  const lossYears = withBusiness
    .filter((y) => y.totals.receipts - y.totals.businessExpenses < 0)
    .map((y) => y.taxYear)
    .sort();
  if (lossYears.length < p.lossYears) {
    return none(
      `${lossYears.length} business loss year${lossYears.length === 1 ? '' : 's'} in the last ${p.lossWindowYears} on file (threshold ${p.lossYears}).`,
    );
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
  return {
    strength: 1,
    evidence: `Activity "${f.activityCode}" is on the office's cash-heavy list (${p.cashHeavyActivities.join(', ')}).`,
    stakeIncomeCents: 0,
    stakeTaxCents: 0,
  };
}

/** Whole units of an amount in cents end in 00 (100, 2,500, 13,400 …). */
export function isRoundHundred(cents: number): boolean {
  const a = Math.abs(cents);
  return a >= 10_000 && Math.floor(a / 100) % 100 === 0;
}

/**
 * Excess round amounts, against the batch's own rate for each line code and kind of filer
 * (whole-unit filers against whole-unit filers): X = amounts of 100 or more whose whole
 * units end in 00, each with its code's rate r_i (shrunk toward the batch's overall rate),
 * and p = P(X >= x) under the Poisson-binomial law of those rates. Recurring bills arrive
 * here counted once.
 *
 * @param lines itemised lines, recurring bills counted once
 * @param rateOf the null rate of a round amount on a code
 */
export function roundAmounts(lines: readonly CentsLine[], rateOf: (code: LineCode) => number, p: Params): FactorResult & { p: number | null } {
  const rates: number[] = [];
  let round = 0;
  for (const l of lines) {
    if (Math.abs(l.cents) < 10_000) continue;
    rates.push(rateOf(l.code));
    if (isRoundHundred(l.cents)) round++;
  }
  const k = rates.length;
  if (k === 0) return { ...none('No amounts of 100 or more.'), p: null };
  const expected = rates.reduce((s, r) => s + r, 0);
  const pValue = poissonBinomialUpperTail(round, rates);
  const what = `${round} of ${k} amounts of 100 or more end in 00; ordinary filers of these lines would show about ${expected.toFixed(1)} (${formatP(pValue)})`;
  const strength = strengthFromP(pValue, p.patternPStart, p.patternPFull);
  return { strength, evidence: `${what}.`, stakeIncomeCents: 0, stakeTaxCents: 0, p: pValue };
}

/**
 * Amounts bunched just under the office's thresholds: the count b in [band × T, T) against
 * what the return's own amounts near the threshold would put there if spread smoothly on a
 * log scale: lambda = k × w_band / (w_window − w_band), k the amounts in the window
 * [T / 2, 2T) outside the band, w the log widths (at least the share a smooth spread of all
 * the return's amounts would give: log10(1/band) / log10(max/min), times n); p = P(Poisson(lambda) >= b).
 * A return whose bills simply sit around 2,000–3,000 then has an ordinary count just under 2,500.
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
  const wBand = Math.log10(1 / p.bunchingBand);
  const pIn = Math.min(0.5, wBand / decades);
  const wWindow = Math.log10(4);
  const found: string[] = [];
  let best = 1;
  for (const T of p.thresholdsCents) {
    const from = Math.ceil(p.bunchingBand * T);
    const inBand = pos.filter((a) => a >= from && a < T).length;
    if (inBand < 2) continue;
    const near = pos.filter((a) => a >= T / 2 && a < 2 * T && !(a >= from && a < T)).length;
    const lambda = Math.max((near * wBand) / (wWindow - wBand), pIn * (pos.length - inBand));
    const pValue = poissonUpperTail(inBand, lambda);
    if (pValue < p.bunchingTailP) {
      found.push(
        `${inBand} of ${pos.length} amounts lie in [${money(from)}, ${money(T)}) just under ${money(T)}; the return's other amounts near it would put about ${lambda.toFixed(1)} there (${formatP(pValue)})`,
      );
      best = Math.min(best, pValue);
    }
  }
  if (!found.length) return none("No bunching just under the office's thresholds.");
  return { strength: clamp01(0.5 + (-Math.log10(best) - 2) / 6), evidence: `${found.join('; ')}.`, stakeIncomeCents: 0, stakeTaxCents: 0 };
}

/**
 * A sharp income drop from the previous year on file: |ln(x_t / x_(t-1))| > ln 2 on lines
 * above 5,000. A drop the third parties confirm is ordinary (retirement, a lost job: the
 * employer's and bank's statements for this year agree with the return), so wages and
 * interest count only where this year's statements do not back the figure, and the total
 * income is judged after taking out a confirmed change.
 */
export function incomeDrop(f: ReturnFacts, t: ReturnTotals, p: Params): FactorResult {
  const prev = f.history.find((h) => h.taxYear === f.taxYear - 1);
  if (!prev) return none('No return on file for the previous year.');
  const stated = (kind: StatementKind) => f.statements.filter((s) => s.kind === kind).reduce((a, s) => a + s.cents, 0);
  // Confirmed: what the return reports is at least what this year's statements say (and, with
  // no statement at all, nothing is reported either: no employer or bank reports pay).
  const confirmed = (kind: StatementKind, reported: number) => {
    const st = stated(kind);
    return st > 0 ? reported >= st - Math.max(p.statementShortfallMinCents, p.statementShortfallShare * st) : reported === 0;
  };
  const wagesConfirmed = confirmed('wages', t.wages);
  const interestConfirmed = confirmed('interest', t.interest);
  // A business that shrinks (or stops, at retirement) loses its costs with its receipts; receipts
  // cut while costs stay is what an under-reported year looks like.
  const receiptsRatio = prev.totals.receipts > 0 ? t.receipts / prev.totals.receipts : 1;
  const costsRatio = prev.totals.businessExpenses > 0 ? t.businessExpenses / prev.totals.businessExpenses : 0;
  const businessShrank = costsRatio <= Math.max(2 * receiptsRatio, receiptsRatio + 0.15);
  const explained =
    (wagesConfirmed ? prev.totals.wages - t.wages : 0) +
    (interestConfirmed ? prev.totals.interest - t.interest : 0) +
    (businessShrank ? prev.totals.receipts - prev.totals.businessExpenses - (t.receipts - t.businessExpenses) : 0);
  const found: string[] = [];
  const calm: string[] = [];
  let strength = 0;
  let stake = 0;
  for (const [label, now, before, ok] of [
    ['wages', t.wages, prev.totals.wages, wagesConfirmed],
    ['business receipts', t.receipts, prev.totals.receipts, businessShrank],
    ['total income', t.income + Math.max(0, explained), prev.totals.income, false],
  ] as const) {
    if (before <= p.incomeDropMinCents) continue;
    const ratio = Math.log(Math.max(now, 1) / before);
    if (-ratio <= p.incomeDropLogRatio) continue;
    if (ok) {
      calm.push(
        `${label} fell from ${money(before)} to ${money(now)}, ${label === 'wages' ? "as this year's third-party statements confirm" : 'with business costs falling alongside'}`,
      );
      continue;
    }
    found.push(
      `${label}${label === 'total income' && explained > 0 ? ' (leaving out the confirmed change in wages and interest and a business shrinking as a whole)' : ''} fell from ${money(before)} in ${f.taxYear - 1} to ${money(now)} (${pct(1 - Math.max(now, 0) / before)} lower)`,
    );
    strength = Math.max(strength, clamp01(0.25 + (-ratio - p.incomeDropLogRatio) / (2 * p.incomeDropLogRatio)));
    stake = Math.max(stake, Math.round((before - Math.max(now, 0)) / 2));
  }
  if (!found.length) return none(calm.length ? `${calm.join('; ')}: ordinary.` : `No sharp drop from ${f.taxYear - 1}.`);
  return { strength, evidence: `${found.join('; ')}.`, stakeIncomeCents: stake, stakeTaxCents: 0 };
}

/**
 * Refund large against tax withheld, counting only what is not already a totals mismatch:
 * a refund the return's own lines give (no tax due on a low income: the whole withholding
 * comes back) is ordinary and scores nothing; a claimed refund above what the lines give is
 * a totals mismatch, and this factor shares the "totals" group with that one, so the
 * difference counts once.
 */
export function refundLarge(t: ReturnTotals, p: Params): FactorResult {
  const refund = t.reported.refund ?? t.refund;
  if (refund <= 0 || t.withheld <= 0) return none('No refund claimed.');
  const ratio = refund / t.withheld;
  if (ratio <= p.refundRatio) return none(`Refund is ${pct(ratio)} of tax withheld (threshold ${pct(p.refundRatio)}).`);
  const supported = refund <= t.refund + p.totalsToleranceCents;
  if (supported)
    return none(
      `Refund of ${money(refund)} is ${pct(ratio)} of tax withheld; the return's lines give this refund (tax due ${money(t.tax)}), which is ordinary.`,
    );
  return {
    strength: clamp01(0.5 + (ratio - p.refundRatio) / (2 * (1 - p.refundRatio + 0.01))),
    evidence: `Refund of ${money(refund)} is ${pct(ratio)} of tax withheld ${money(t.withheld)} (threshold ${pct(p.refundRatio)}); the lines give ${money(t.refund)}.`,
    stakeIncomeCents: 0,
    stakeTaxCents: 0,
  };
}

/** How common an exact amount is in the batch (absolute cents), for the repeat null models. */
export interface AmountPopularity {
  /** Share of the batch's amounts (>= the repeat minimum, one per return and line code) equal to `cents`, among filers of the same kind; leave-one-out. */
  share(cents: number, wholeUnit: boolean, ownSlots: number): number;
  /** Other taxpayers in the batch whose returns carry `cents` (leave-one-out). */
  otherTaxpayers(cents: number): number;
}

/**
 * The same amount repeated, against chance (a birthday model with the batch's own
 * frequencies): for each amount v on this return (recurring bills counted once) that
 * appears c >= 2 times among its n amounts, p_v = P(Binomial(n − 1, pi_v) >= c − 1), pi_v
 * being how often v is among the amounts of filers of the same kind (round and whole-unit
 * amounts are common, so their repeats are expected); Bonferroni over the amounts tested.
 * Shared with other clients of the same preparer: if clients were spread over preparers at
 * random, an amount carried by m other taxpayers would turn up at the same preparer with
 * probability 1 − (1 − s)^m, s the preparer's share of the batch's other taxpayers; the
 * count of shared amounts is referred to the Poisson-binomial law of those probabilities.
 * The component's p is Simes' combination of the two.
 */
export function repeatedAmounts(
  lines: readonly CentsLine[],
  wholeUnit: boolean,
  pop: AmountPopularity,
  sharing: { shared: ReadonlySet<number>; poolShare: number } | null,
  p: Params,
): FactorResult & { p: number | null; pWithin: number | null; pShared: number | null } {
  const counts = new Map<number, { n: number; codes: Set<string> }>();
  for (const l of lines) {
    const a = Math.abs(l.cents);
    if (a < p.repeatMinCents) continue;
    const e = counts.get(a) ?? { n: 0, codes: new Set<string>() };
    e.n++;
    e.codes.add(l.code);
    counts.set(a, e);
  }
  const n = [...counts.values()].reduce((s, e) => s + e.n, 0);
  if (!counts.size) return { ...none('No amount of 100 or more to compare.'), p: null, pWithin: null, pShared: null };
  const repeated = [...counts].filter(([, e]) => e.n >= p.repeatMinCount).sort((a, b) => b[1].n - a[1].n || b[0] - a[0]);
  let pWithin = 1;
  const repParts: string[] = [];
  for (const [a, e] of repeated) {
    const pi = Math.min(1, Math.max(pop.share(a, wholeUnit, e.codes.size), 1e-9));
    const pv = binomialUpperTail(e.n - 1, n - 1, pi);
    pWithin = Math.min(pWithin, pv);
    if (repParts.length < 4) repParts.push(`${money(a)} × ${e.n}`);
  }
  pWithin = Math.min(1, pWithin * counts.size);
  let pShared: number | null = null;
  let sharedExpected = 0;
  const shared: number[] = [];
  if (sharing) {
    const probs: number[] = [];
    for (const a of counts.keys()) {
      const m = pop.otherTaxpayers(a);
      probs.push(m > 0 ? 1 - Math.pow(1 - sharing.poolShare, m) : 0);
      if (sharing.shared.has(a)) shared.push(a);
    }
    pShared = poissonBinomialUpperTail(shared.length, probs);
    sharedExpected = probs.reduce((s, x) => s + x, 0);
    shared.sort((x, y) => y - x);
  }
  const pValue = simes([repeated.length ? pWithin : null, pShared]);
  const parts: string[] = [];
  if (repeated.length)
    parts.push(
      `on this return ${repParts.join(', ')}${repeated.length > 4 ? ` and ${repeated.length - 4} more` : ''} (chance for amounts this common: ${formatP(pWithin)})`,
    );
  if (shared.length) {
    const expected = sharedExpected;
    parts.push(
      `${shared.length} amount${shared.length === 1 ? '' : 's'} also on other clients' returns of the same preparer (${shared.slice(0, 3).map(money).join(', ')}${shared.length > 3 ? ' …' : ''}); a firm of this size would share about ${expected.toFixed(1)} by chance (${formatP(pShared ?? 1)})`,
    );
  }
  if (!parts.length) return { ...none('No amount of note repeats.'), p: pValue, pWithin: repeated.length ? pWithin : null, pShared };
  const strength = strengthFromP(pValue, p.patternPStart, p.patternPFull);
  return {
    strength,
    evidence: `Repeated amounts: ${parts.join('; ')}.`,
    stakeIncomeCents: 0,
    stakeTaxCents: 0,
    p: pValue,
    pWithin: repeated.length ? pWithin : null,
    pShared,
  };
}
