/**
 * The Aldermere demo batch generator (DESIGN.md section 9): a seeded, repeatable batch of
 * returns for the fictional Revenue Office of Aldermere, with a planted minority of
 * returns whose figures were invented or break the rules, each one labelled in an answer
 * list that is kept apart from the batch, so the ranking can be measured (what share of
 * the plants reach the top of the queue).
 *
 * How honest figures are made. Real bookkeeping amounts come out of multiplicative
 * processes (a price times a quantity times a season, a balance times a rate, a wage
 * grown by a yearly rise), and products of independent factors spread over orders of
 * magnitude in log space, which is why their leading digits follow Benford's law. So:
 *  - every taxpayer gets log-normal scales (wage per employer, business size, savings
 *    balance and rate, giving and medical habits), and each later year multiplies them by
 *    a log-normal yearly change;
 *  - itemised entries (each purchase, bill or gift) split a category's yearly amount by
 *    log-normal weights, so single entries range from a few units to thousands;
 *  - interest is balance × rate, withholding is wage × a withholding rate;
 *  - the `tot.*` lines, the refund and the third-party statements follow from those
 *    figures by Aldermere's rules (shared/returns/line-codes.ts), so honest returns add up
 *    and match what employers, banks and the card processor report.
 *
 * What is planted: see {@link PLANT_KINDS}. Pure code (no Node modules): the CLI
 * (scripts/generate-demo.ts), the demo seed and the benchmarks write the files.
 */
import { ALDERMERE_TAX, computeTax, computeTotals, type ActivityCode, type CentsLine, type LineCode, type StatementKind } from '../returns/line-codes';
import { formatCents, MAX_LINE_AMOUNT_CENTS } from '../returns/money';
import { BANKS, businessName, EMPLOYERS, emailFor, personName, postalAddress, SALES_REPORTER } from './names';
import { createRng, type Rng } from './prng';

/**
 * The kinds of planted return. Each says what was done to the return and which test or
 * risk factor (DESIGN.md section 5) is meant to notice it. A planted return has one kind,
 * sometimes two; `preparer_mill` always comes with `invented_digits`.
 */
export const PLANT_KINDS = {
  invented_digits: 'Itemised expenses and deductions replaced by made-up figures (leading digits favour 4–7, many round endings), totals kept consistent: only the digit tests can see it.',
  round_amounts: 'Most itemised entries are whole hundreds (e.g. 1200.00): the excess-round-amounts factor.',
  threshold_bunching: 'Several expense entries just under the 2,500 receipt threshold (2,250–2,499.99): the bunching-under-a-threshold factor.',
  totals_mismatch: 'tot.income reported 8–40 % below what the lines add up to (refund figured from the lower total): the totals-do-not-add-up factor.',
  unreported_income: 'One employer\'s wages or one bank\'s interest left off the return or cut, while the third-party statement reports it in full: income below third-party statements.',
  expenses_exceed_receipts: 'Business expenses inflated to 95–140 % of gross receipts (a loss): expenses near or above receipts.',
  inflated_deductions: 'Charitable gifts or medical bills of 35–70 % of income: deductions large against income.',
  refund_inflated: 'tax.refund claimed well above what the rules give (up to the whole tax withheld): refund large against withholding, and totals that do not add up.',
  repeated_amounts: 'The same amount entered on 4–8 expense lines: the repeated-amounts factor.',
  income_drop: 'Business receipts cut to 15–40 % of the year before while costs stay: the sharp-income-drop factor.',
  preparer_mill: 'Every return by one preparer (the "mill") carries invented figures: pooled per-preparer digit tests should flag all of them.',
} as const;
export type PlantKind = keyof typeof PLANT_KINDS;

/** Options for {@link generate}. */
export interface GenerateOptions {
  /** Same seed, same batch. */
  seed: number | string;
  /** Number of returns (taxpayers × years, the last taxpayer may file fewer years). */
  returns: number;
  /** Share of returns that are planted, 0–1 (default 0.05). */
  plantShare?: number;
  /** Tax years each taxpayer files (default 2022–2025). */
  years?: readonly number[];
  /** Number of preparers (default one per ~40 taxpayers, at least 5). */
  preparers?: number;
  /** Multiplies how many itemised entries a return has (default 1; the ingest benchmark raises it). */
  itemisation?: number;
  /** Prefix of return references (default "ALD"). */
  refPrefix?: string;
}

/** A `returns` row as written to the file. */
export interface ReturnFileRow {
  return_ref: string;
  tin: string;
  tax_year: string;
  taxpayer_name: string;
  activity_code: string;
  preparer_id: string;
  email: string;
  postal_address: string;
}
/** A `line_items` row as written to the file. */
export interface LineItemFileRow {
  return_ref: string;
  line_code: string;
  amount: string;
}
/** A `statements` row as written to the file. */
export interface StatementFileRow {
  tin: string;
  tax_year: string;
  kind: string;
  payer: string;
  amount: string;
}

/** One planted return in the answer file. */
export interface PlantLabel {
  returnRef: string;
  tin: string;
  taxYear: number;
  /** The preparer id on the return ("" when self-prepared). */
  preparerId: string;
  kinds: PlantKind[];
  /** What exactly was changed, for a person reading the answers. */
  detail: string;
}

/** One return with its lines, the statements about that taxpayer-year, and its label if planted. */
export interface GeneratedReturn {
  ret: ReturnFileRow;
  lines: LineItemFileRow[];
  statements: StatementFileRow[];
  label: PlantLabel | null;
}

/** A whole generated batch. */
export interface GeneratedBatch {
  returns: ReturnFileRow[];
  lineItems: LineItemFileRow[];
  statements: StatementFileRow[];
  /** The answer list: never written into the batch itself. */
  labels: PlantLabel[];
}

/** Default tax years of the Aldermere scenario. */
export const DEMO_YEARS: readonly number[] = [2022, 2023, 2024, 2025];

const ACTIVITY_WEIGHTS: Record<ActivityCode, number> = {
  none: 44,
  retail: 8,
  'food-service': 6,
  construction: 7,
  'personal-care': 5,
  consulting: 8,
  transport: 6,
  rental: 6,
  farming: 4,
  other: 6,
};

const PLANT_WEIGHTS: Record<Exclude<PlantKind, 'preparer_mill'>, number> = {
  invented_digits: 3,
  round_amounts: 2,
  threshold_bunching: 2,
  totals_mismatch: 2,
  unreported_income: 2,
  expenses_exceed_receipts: 2,
  inflated_deductions: 2,
  refund_inflated: 1,
  repeated_amounts: 1,
  income_drop: 1,
};

interface Employer {
  name: string;
  wage: number; // yearly, units (not cents), before the yearly change
  withholdRate: number;
}
interface Bank {
  name: string;
  balance: number;
  rate: number;
  withholds: boolean;
  reported: boolean;
}
interface Business {
  scale: number; // yearly receipts, units
  periods: number;
  expenseRatio: number;
  mix: { supplies: number; vehicle: number; travel: number; other: number };
  cardShare: number | null; // share of receipts reported by the card processor
}
interface Taxpayer {
  tin: string;
  name: string;
  given: string;
  family: string;
  activity: ActivityCode;
  preparerId: string;
  mill: boolean;
  email: string;
  address: string;
  employers: Employer[];
  banks: Bank[];
  business: Business | null;
  charity: { gifts: number; median: number } | null;
  medical: { bills: number; median: number } | null;
  /** Multiplicative level for the current year, walked year by year. */
  level: number;
}

/** A line while the return is being built: code and cents. */
type Line = CentsLine;

const cents = (units: number) => Math.max(50, Math.min(MAX_LINE_AMOUNT_CENTS, Math.round(units * 100)));

/** Splits a yearly amount (units) into `count` entries by log-normal weights. */
function split(rng: Rng, total: number, count: number, sigma = 1.0): number[] {
  if (count <= 0 || total <= 0) return [];
  const w: number[] = [];
  let sum = 0;
  for (let i = 0; i < count; i++) {
    const x = Math.exp(sigma * rng.normal());
    w.push(x);
    sum += x;
  }
  return w.map((x) => cents((total * x) / sum));
}

function scaled(rng: Rng, lo: number, hi: number, factor: number): number {
  return Math.max(0, Math.round(rng.int(lo, hi) * factor));
}

function makeTaxpayer(rng: Rng, tin: string, preparerIds: readonly string[], millId: string | null, millLeft: { n: number }): Taxpayer {
  const person = personName(rng);
  const activity = rng.weighted(ACTIVITY_WEIGHTS);
  const hasBusiness = activity !== 'none';
  let preparerId = '';
  let mill = false;
  if (millId && millLeft.n > 0 && rng.chance(0.5)) {
    preparerId = millId;
    mill = true;
    millLeft.n--;
  } else if (rng.chance(0.7) && preparerIds.length) {
    preparerId = rng.pick(preparerIds);
  }
  const employerCount = hasBusiness ? (rng.chance(0.3) ? 1 : 0) : rng.chance(0.93) ? rng.weighted({ '1': 80, '2': 17, '3': 3 }) : 0;
  const employers: Employer[] = [];
  for (let i = 0; i < Number(employerCount); i++) {
    employers.push({
      name: rng.pick(EMPLOYERS),
      wage: rng.logNormal(i === 0 ? 36_000 : 9_000, 0.55),
      withholdRate: Math.min(0.3, Math.max(0.04, 0.13 + 0.035 * rng.normal())),
    });
  }
  const banks: Bank[] = [];
  if (rng.chance(0.65)) {
    const n = rng.weighted({ '1': 60, '2': 30, '3': 10 });
    for (let i = 0; i < Number(n); i++) {
      banks.push({
        name: rng.pick(BANKS),
        balance: rng.logNormal(6_000, 1.4),
        rate: rng.logNormal(0.02, 0.35),
        withholds: rng.chance(0.5),
        reported: rng.chance(0.8),
      });
    }
  }
  let business: Business | null = null;
  if (hasBusiness) {
    const a = rng.logNormal(1, 0.6);
    const b = rng.logNormal(1, 0.6);
    const c = rng.logNormal(0.6, 0.8);
    const d = rng.logNormal(1, 0.6);
    const s = a + b + c + d;
    business = {
      scale: rng.logNormal(85_000, 1.0),
      periods: rng.pick([4, 4, 6, 12, 12]),
      expenseRatio: Math.min(0.88, Math.max(0.2, 0.55 + 0.14 * rng.normal())),
      mix: { supplies: a / s, vehicle: b / s, travel: c / s, other: d / s },
      cardShare: rng.chance(0.35) ? 0.35 + 0.35 * rng.next() : null,
    };
  }
  return {
    tin,
    name: person.full,
    given: person.given,
    family: person.family,
    activity,
    preparerId,
    mill,
    email: rng.chance(0.75) ? emailFor(rng, person.given, person.family) : '',
    address: postalAddress(rng),
    employers,
    banks,
    business,
    charity: rng.chance(0.5) ? { gifts: rng.int(1, 5), median: rng.logNormal(90, 0.8) } : null,
    medical: rng.chance(0.35) ? { bills: rng.int(1, 5), median: rng.logNormal(250, 0.9) } : null,
    level: 1,
  };
}

/** The honest figures of one taxpayer-year, before any plant. */
interface Draft {
  lines: Line[];
  statements: { kind: StatementKind; payer: string; cents: number }[];
  /** Indices into `lines` of itemised expense/deduction entries (what digit plants rewrite). */
  itemised: number[];
  receipts: number; // cents
}

function draftYear(rng: Rng, tp: Taxpayer, itemisation: number): Draft {
  const lines: Line[] = [];
  const statements: Draft['statements'] = [];
  const itemised: number[] = [];
  const push = (code: LineCode, c: number, item = false) => {
    if (item) itemised.push(lines.length);
    lines.push({ code, cents: c });
  };
  for (const e of tp.employers) {
    const wage = cents(e.wage * tp.level * rng.logNormal(1, 0.04));
    push('inc.wages', wage);
    statements.push({ kind: 'wages', payer: e.name, cents: wage });
    push('tax.withheld', cents((wage / 100) * e.withholdRate));
  }
  for (const b of tp.banks) {
    const interest = cents(b.balance * b.rate * rng.logNormal(1, 0.15) * tp.level);
    push('inc.interest', interest);
    if (b.reported) statements.push({ kind: 'interest', payer: b.name, cents: interest });
    if (b.withholds) push('tax.withheld', cents((interest / 100) * 0.1));
  }
  let receipts = 0;
  const bz = tp.business;
  if (bz) {
    const yearly = bz.scale * tp.level;
    for (const r of split(rng, yearly, Math.max(1, Math.round(bz.periods * itemisation)), 0.35)) {
      receipts += r;
      push('inc.business.receipts', r);
    }
    if (bz.cardShare !== null) statements.push({ kind: 'sales', payer: SALES_REPORTER, cents: Math.round(receipts * bz.cardShare) });
    const costs = (receipts / 100) * bz.expenseRatio * rng.logNormal(1, 0.08);
    const cats: [LineCode, number, number, number][] = [
      ['exp.business.supplies', bz.mix.supplies, 4, 18],
      ['exp.business.vehicle', bz.mix.vehicle, 1, 8],
      ['exp.business.travel', bz.mix.travel, 0, 5],
      ['exp.business.other', bz.mix.other, 1, 8],
    ];
    for (const [code, share, lo, hi] of cats) {
      const n = scaled(rng, lo, hi, itemisation);
      for (const c of split(rng, costs * share, n, 1.1)) push(code, c, true);
    }
  }
  if (tp.charity) for (let i = 0; i < Math.max(1, Math.round(tp.charity.gifts * itemisation)); i++) push('ded.charity', cents(rng.logNormal(tp.charity.median, 1.0)), true);
  if (tp.medical) for (let i = 0; i < Math.max(1, Math.round(tp.medical.bills * itemisation)); i++) push('ded.medical', cents(rng.logNormal(tp.medical.median, 1.1)), true);
  return { lines, statements, itemised, receipts };
}

/** A made-up figure of about the same size: how people invent numbers, not how books grow. */
function invent(rng: Rng, like: number): number {
  const units = Math.max(10, like / 100);
  const digits = Math.max(2, Math.floor(Math.log10(units)) + 1);
  const first = Number(rng.weighted({ '1': 5, '2': 8, '3': 11, '4': 14, '5': 15, '6': 15, '7': 14, '8': 10, '9': 8 }));
  let v = first;
  for (let i = 1; i < digits; i++) v = v * 10 + rng.int(0, 9);
  if (rng.chance(0.45)) v = Math.round(v / 10) * 10;
  if (rng.chance(0.25)) v = Math.round(v / 50) * 50 || 50;
  const c = rng.chance(0.7) ? 0 : rng.int(1, 99);
  return Math.min(MAX_LINE_AMOUNT_CENTS, v * 100 + c);
}

/** Kinds that make sense for this draft. */
function applicableKinds(tp: Taxpayer, d: Draft, yearIndex: number): Exclude<PlantKind, 'preparer_mill'>[] {
  const out: Exclude<PlantKind, 'preparer_mill'>[] = ['invented_digits', 'round_amounts', 'threshold_bunching', 'totals_mismatch', 'inflated_deductions', 'repeated_amounts'];
  if (d.statements.some((s) => s.kind !== 'sales')) out.push('unreported_income');
  if (tp.business) out.push('expenses_exceed_receipts');
  if (d.lines.some((l) => l.code === 'tax.withheld')) out.push('refund_inflated');
  if (tp.business && yearIndex > 0 && tp.business.cardShare === null) out.push('income_drop');
  return out;
}

function ensureItemised(rng: Rng, d: Draft, n: number): void {
  // A return with few itemised entries gets some deductions, so a digit plant has figures to show.
  while (d.itemised.length < n) {
    d.itemised.push(d.lines.length);
    d.lines.push({ code: rng.chance(0.5) ? 'ded.medical' : 'ded.charity', cents: cents(rng.logNormal(300, 1.0)) });
  }
}

/** Applies one plant to the draft lines; returns a sentence for the answer file. */
function plant(rng: Rng, kind: Exclude<PlantKind, 'preparer_mill'>, d: Draft, tp: Taxpayer): string {
  switch (kind) {
    case 'invented_digits': {
      ensureItemised(rng, d, 8);
      for (const i of d.itemised) d.lines[i].cents = invent(rng, d.lines[i].cents);
      return `${d.itemised.length} itemised entries replaced by invented figures`;
    }
    case 'round_amounts': {
      ensureItemised(rng, d, 6);
      let n = 0;
      for (const i of d.itemised) {
        if (rng.chance(0.8)) {
          d.lines[i].cents = Math.max(10_000, Math.round(d.lines[i].cents / 10_000) * 10_000);
          n++;
        }
      }
      return `${n} of ${d.itemised.length} itemised entries rounded to whole hundreds`;
    }
    case 'threshold_bunching': {
      const code: LineCode = tp.business ? 'exp.business.other' : 'ded.medical';
      const n = rng.int(3, 6);
      for (let i = 0; i < n; i++) {
        d.itemised.push(d.lines.length);
        d.lines.push({ code, cents: rng.int(225_000, 249_999) });
      }
      return `${n} ${code} entries between 2,250 and 2,499.99 (receipt threshold 2,500)`;
    }
    case 'repeated_amounts': {
      ensureItemised(rng, d, 6);
      const amount = invent(rng, 80_000);
      const n = Math.min(d.itemised.length, rng.int(4, 8));
      for (let k = 0; k < n; k++) d.lines[d.itemised[k]].cents = amount;
      return `the amount ${formatCents(amount)} entered on ${n} lines`;
    }
    case 'inflated_deductions': {
      const t = computeTotals(d.lines);
      const base = Math.max(t.income, 2_000_000);
      const code: LineCode = rng.chance(0.5) ? 'ded.charity' : 'ded.medical';
      const target = Math.round(base * (0.35 + 0.35 * rng.next()));
      const parts = split(rng, target / 100, rng.int(3, 7), 0.7);
      for (const c of parts) {
        d.itemised.push(d.lines.length);
        d.lines.push({ code, cents: c });
      }
      return `${code} raised by ${formatCents(target)} (${parts.length} entries) against income ${formatCents(base)}`;
    }
    case 'expenses_exceed_receipts': {
      const ratio = 0.95 + 0.45 * rng.next();
      const exp = d.lines.filter((l) => l.code.startsWith('exp.'));
      const have = exp.reduce((s, l) => s + l.cents, 0);
      const want = d.receipts * ratio;
      const f = have > 0 ? want / have : 1;
      for (const l of exp) l.cents = Math.min(MAX_LINE_AMOUNT_CENTS, Math.max(50, Math.round(l.cents * f)));
      return `business expenses set to ${(ratio * 100).toFixed(0)} % of receipts`;
    }
    case 'unreported_income': {
      const st = d.statements.filter((s) => s.kind !== 'sales');
      const target = rng.pick(st);
      const code: LineCode = target.kind === 'wages' ? 'inc.wages' : 'inc.interest';
      const idx = d.lines.findIndex((l) => l.code === code && l.cents === target.cents);
      if (rng.chance(0.5) || idx < 0) {
        if (idx >= 0) removeLine(d, idx);
        return `${code} from ${target.payer} (${formatCents(target.cents)}, on the statement) left off the return`;
      }
      const cut = 0.3 + 0.4 * rng.next();
      d.lines[idx].cents = Math.max(50, Math.round(target.cents * cut));
      return `${code} from ${target.payer} reported as ${formatCents(d.lines[idx].cents)}; the statement says ${formatCents(target.cents)}`;
    }
    case 'income_drop': {
      const f = 0.15 + 0.25 * rng.next();
      for (const l of d.lines) if (l.code === 'inc.business.receipts') l.cents = Math.max(50, Math.round(l.cents * f));
      return `business receipts cut to ${(f * 100).toFixed(0)} % of their honest level; costs unchanged`;
    }
    case 'totals_mismatch':
    case 'refund_inflated':
      return ''; // applied to the totals, see finishLines
  }
}

function removeLine(d: Draft, idx: number): void {
  d.lines.splice(idx, 1);
  d.itemised = d.itemised.filter((i) => i !== idx).map((i) => (i > idx ? i - 1 : i));
}

/** Adds the tot.* and tax.refund lines (honest, or bent by a totals plant). */
function finishLines(rng: Rng, d: Draft, kinds: readonly PlantKind[], details: string[]): void {
  const t = computeTotals(d.lines);
  let reportedIncome = t.income;
  let refund = t.refund;
  if (kinds.includes('totals_mismatch')) {
    const f = 0.6 + 0.32 * rng.next();
    const under = Math.max(100_000, Math.round(Math.abs(t.income) * (1 - f)));
    reportedIncome = t.income - under;
    const taxOnReported = computeTax(reportedIncome - t.deductions - ALDERMERE_TAX.allowanceCents);
    refund = Math.max(refund, t.withheld - taxOnReported);
    details.push(`tot.income reported as ${formatCents(reportedIncome)}; the lines add up to ${formatCents(t.income)}`);
  }
  if (kinds.includes('refund_inflated')) {
    const extra = Math.round(t.withheld * (0.3 + 0.4 * rng.next()));
    refund = Math.min(t.withheld, refund + extra);
    if (refund <= t.refund) refund = t.refund + Math.max(5_000, Math.round(t.withheld * 0.2));
    details.push(`tax.refund claimed ${formatCents(refund)}; the rules give ${formatCents(t.refund)}`);
  }
  d.lines.push({ code: 'tot.income', cents: reportedIncome });
  if (t.deductions > 0) d.lines.push({ code: 'tot.deductions', cents: t.deductions });
  if (refund > 0) d.lines.push({ code: 'tax.refund', cents: refund });
}

/**
 * Yields the batch one return at a time (taxpayer by taxpayer, year by year), so large
 * batches can be written to files without holding them in memory.
 */
export function* generateReturns(opts: GenerateOptions): Generator<GeneratedReturn> {
  const years = [...(opts.years ?? DEMO_YEARS)].sort((a, b) => a - b);
  const plantShare = Math.min(1, Math.max(0, opts.plantShare ?? 0.05));
  const itemisation = opts.itemisation ?? 1;
  const prefix = opts.refPrefix ?? 'ALD';
  const taxpayerCount = Math.ceil(opts.returns / years.length);
  const root = createRng(opts.seed);
  const preparerCount = opts.preparers ?? Math.max(5, Math.round(taxpayerCount / 40));
  const preparerIds = Array.from({ length: preparerCount }, (_, i) => `PRP-${String(i + 1).padStart(4, '0')}`);
  // The mill takes about a fifth of the plant budget, so its pooled digit profile has enough amounts.
  const millTaxpayers = plantShare > 0 && preparerCount >= 5 ? Math.floor((taxpayerCount * plantShare) / 5) : 0;
  const millId = millTaxpayers >= 2 ? preparerIds[preparerCount - 1] : null;
  const millLeft = { n: millId ? millTaxpayers : 0 };
  const millReturns = millLeft.n * years.length;
  const restShare = Math.max(0, (plantShare * opts.returns - millReturns) / Math.max(1, opts.returns - millReturns));

  const usedTins = new Set<string>();
  let emitted = 0;
  for (let p = 0; p < taxpayerCount && emitted < opts.returns; p++) {
    const rng = root.fork(`taxpayer-${p}`);
    let tin: string;
    do tin = String(rng.int(0, 999_999_999)).padStart(9, '0');
    while (usedTins.has(tin));
    usedTins.add(tin);
    const tp = makeTaxpayer(rng, tin, preparerIds.slice(0, millId ? -1 : undefined), millId, millLeft);
    const tradingAs = tp.business && rng.chance(0.4) ? ` t/a ${businessName(rng, tp.family, tp.activity)}` : '';
    for (let y = 0; y < years.length && emitted < opts.returns; y++) {
      if (y > 0) tp.level *= rng.logNormal(1.03, 0.09);
      emitted++;
      const year = years[y];
      const returnRef = `${prefix}-${year}-${String(emitted).padStart(6, '0')}`;
      const d = draftYear(rng, tp, itemisation);
      const kinds: PlantKind[] = [];
      const details: string[] = [];
      if (tp.mill) kinds.push('preparer_mill', 'invented_digits');
      else if (rng.chance(restShare)) {
        const options = applicableKinds(tp, d, y);
        const weights = Object.fromEntries(options.map((k) => [k, PLANT_WEIGHTS[k]])) as Record<string, number>;
        const first = rng.weighted(weights) as Exclude<PlantKind, 'preparer_mill'>;
        kinds.push(first);
        if (rng.chance(0.25)) {
          delete weights[first];
          const keys = Object.keys(weights);
          if (keys.length) kinds.push(rng.weighted(weights) as PlantKind);
        }
      }
      for (const k of kinds) {
        if (k === 'preparer_mill') continue;
        const text = plant(rng, k, d, tp);
        if (text) details.push(text);
      }
      finishLines(rng, d, kinds, details);

      const ret: ReturnFileRow = {
        return_ref: returnRef,
        tin,
        tax_year: String(year),
        taxpayer_name: tp.name + tradingAs,
        activity_code: tp.activity,
        preparer_id: tp.preparerId,
        email: tp.email,
        postal_address: tp.address,
      };
      const lines = d.lines.map((l) => ({ return_ref: returnRef, line_code: l.code, amount: formatCents(l.cents) }));
      const statements = d.statements.map((s) => ({ tin, tax_year: String(year), kind: s.kind, payer: s.payer, amount: formatCents(s.cents) }));
      const label: PlantLabel | null = kinds.length
        ? { returnRef, tin, taxYear: year, preparerId: tp.preparerId, kinds, detail: (tp.mill ? [`prepared by the mill ${tp.preparerId}`, ...details] : details).join('; ') }
        : null;
      yield { ret, lines, statements, label };
    }
  }
}

/**
 * Generates a whole batch in memory: rows for the three files, and the answer labels.
 * For a ranking benchmark: `generate({ seed: 7, returns: 4000, plantShare: 0.05, years: [2022, 2023, 2024, 2025] })`.
 */
export function generate(opts: GenerateOptions): GeneratedBatch {
  const out: GeneratedBatch = { returns: [], lineItems: [], statements: [], labels: [] };
  for (const g of generateReturns(opts)) {
    out.returns.push(g.ret);
    for (const l of g.lines) out.lineItems.push(l);
    for (const s of g.statements) out.statements.push(s);
    if (g.label) out.labels.push(g.label);
  }
  return out;
}
