/**
 * The Aldermere demo batch generator (docs/design.md#demo-data): a seeded, repeatable batch of
 * returns for the fictional Revenue Office of Aldermere, with a planted minority of
 * returns whose figures were invented or break the rules, each one labelled in an answer
 * list that is kept apart from the batch, so the ranking can be measured (what share of
 * the plants reach the top of the queue).
 *
 * How typical (unplanted) figures are made. Real bookkeeping amounts come out of multiplicative
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
 *    figures by Aldermere's rules (shared/returns/line-codes.ts), so typical returns add up
 *    and match what employers, banks and the card processor report.
 *
 * Typical filers also have real habits that a naive reading of the figures mistakes for
 * invention (issue 10): whole-unit reporting, the same bill twelve times a year, one large
 * preparer firm, refunds of all tax withheld when no tax is due, standing monthly gifts,
 * and the income drop of retirement. Each is a labelled share of taxpayers, see
 * {@link HABIT_KINDS}. The batch format has no period or date column, so a monthly bill is
 * twelve line items of one (repeatable) line code with the same amount.
 *
 * What is planted: see {@link PLANT_KINDS}; two kinds hide inside a habit (an invented
 * expense repeated monthly, invented figures filed in whole units). Pure code (no Node
 * modules): the CLI (scripts/generate-demo.ts), the demo seed and the benchmarks write the
 * files.
 *
 * TINs are drawn from the block 000000000–000999999: area number 000 is never issued as a
 * US Social Security number (Social Security Administration, "SSN Randomization FAQs",
 * ssa.gov/employer/randomizationfaqs.html: randomisation excludes area numbers 000, 666
 * and 900–999), whereas 9xx is issued as US ITINs; using 000 for made-up identifiers is
 * common practice, no source. So no demo TIN can be a real person's number there.
 */
import { ALDERMERE_TAX, computeTax, computeTotals, type ActivityCode, type CentsLine, type LineCode, type StatementKind } from '../returns/line-codes';
import { formatCents, MAX_LINE_AMOUNT_CENTS } from '../returns/money';
import { BANKS, businessName, EMPLOYERS, emailFor, personName, postalAddress, SALES_REPORTER } from './names';
import { createRng, type Rng } from './prng';

/**
 * The kinds of planted return. Each says what was done to the return and which test or
 * risk factor (docs/methods.md#risk-factors) is meant to notice it. A planted return has one kind,
 * sometimes two; `preparer_mill` always comes with `invented_digits`.
 */
export const PLANT_KINDS = {
  invented_digits:
    'Itemised expenses and deductions replaced by made-up figures (leading digits favour 4–7, many round endings), totals kept consistent: only the digit tests can see it.',
  round_amounts: 'Most itemised entries are whole hundreds (e.g. 1200.00): the excess-round-amounts factor.',
  threshold_bunching: 'Several expense entries just under the 2,500 receipt threshold (2,250–2,499.99): the bunching-under-a-threshold factor.',
  totals_mismatch: 'tot.income reported 8–40 % below what the lines add up to (refund figured from the lower total): the totals-do-not-add-up factor.',
  unreported_income:
    "One employer's wages or one bank's interest left off the return or cut, while the third-party statement reports it in full: income below third-party statements.",
  expenses_exceed_receipts: 'Business expenses inflated to 95–140 % of gross receipts (a loss): expenses near or above receipts.',
  inflated_deductions: 'Charitable gifts or medical bills of 35–70 % of income: deductions large against income.',
  refund_inflated:
    'tax.refund claimed well above what the rules give (up to the whole tax withheld): refund large against withholding, and totals that do not add up.',
  repeated_amounts: 'The same amount entered on 4–8 expense lines: the repeated-amounts factor.',
  income_drop: 'Business receipts cut to 15–40 % of the year before while costs stay: the sharp-income-drop factor.',
  preparer_mill: 'Every return by one preparer (the "mill") carries invented figures: pooled per-preparer digit tests should flag all of them.',
  invented_recurring:
    'An invented expense or deduction entered 12 times with one made-up amount, as if a monthly bill (15–35 % of receipts, or 20–45 % of income): hides inside the recurring-bill habit; out of line with peers for its line code.',
  invented_whole_units:
    'A whole-unit filer whose itemised expenses and deductions were replaced by made-up figures (no cents, like the rest of the return): hides inside the whole-unit habit.',
} as const;
export type PlantKind = keyof typeof PLANT_KINDS;

/**
 * Habits of typical filers (issue 10). Each is given to a share of taxpayers (see
 * {@link DEFAULT_HABIT_SHARES}) and labelled on every return where it shows, planted or not.
 */
export const HABIT_KINDS = {
  whole_units: 'Reports every amount in whole units: no cents anywhere on the return (third-party statements keep their cents).',
  recurring_bills:
    'Pays the same bill every month: 12 equal entries of one line code (business rent or an insurance premium on exp.business.other, a vehicle lease instalment on exp.business.vehicle; without a business a monthly care plan on ded.medical); about half round (850.00), half with cents (137.42).',
  large_firm: 'Prepared by the one large preparer firm, which prepares a large share of all prepared returns.',
  zero_tax_refund: 'Income below the personal allowance, so no tax is due and the refund equals all tax withheld.',
  monthly_gifts: 'A standing monthly gift: 12 equal ded.charity entries (e.g. 12 × 25.00).',
  retirement_drop:
    'Retires: wages or business receipts for part of that year only (business costs fall with them), then interest only (the return has no pension line).',
} as const;
export type HabitKind = keyof typeof HABIT_KINDS;

/** Share of taxpayers given each habit. */
export type HabitShares = Readonly<Record<HabitKind, number>>;

/**
 * Default habit shares (of taxpayers), what the demo and the ranking benchmark use. Large
 * enough to be measured per habit on a few thousand returns; the firm's 30 % of taxpayers
 * is about 40 % of the prepared returns.
 */
export const DEFAULT_HABIT_SHARES: HabitShares = {
  whole_units: 0.25,
  recurring_bills: 0.3,
  large_firm: 0.3,
  zero_tax_refund: 0.08,
  monthly_gifts: 0.15,
  retirement_drop: 0.08,
};

/** No habits: the idealised batch (what the generator made before issue 10). */
export const NO_HABITS: HabitShares = { whole_units: 0, recurring_bills: 0, large_firm: 0, zero_tax_refund: 0, monthly_gifts: 0, retirement_drop: 0 };

const HABIT_ALIASES: Record<string, HabitKind> = {
  'whole-units': 'whole_units',
  'whole-unit': 'whole_units',
  recurring: 'recurring_bills',
  'recurring-bills': 'recurring_bills',
  bills: 'recurring_bills',
  'large-firm': 'large_firm',
  firm: 'large_firm',
  'zero-tax': 'zero_tax_refund',
  'zero-tax-refund': 'zero_tax_refund',
  gifts: 'monthly_gifts',
  'monthly-gifts': 'monthly_gifts',
  retirement: 'retirement_drop',
  'retirement-drop': 'retirement_drop',
};

/**
 * Reads a `--habit-share` text: `off` (no habits), `on`/`default`, or comma-separated
 * `name=share` pairs over the defaults, e.g. `whole-units=0.25,recurring=0.3`. Names are the
 * {@link HABIT_KINDS} keys with `-` or `_`, or the short forms recurring, firm, zero-tax,
 * gifts, retirement.
 * @throws Error saying which pair is wrong and how to write it
 */
export function parseHabitShares(text: string, base: HabitShares = DEFAULT_HABIT_SHARES): HabitShares {
  const t = text.trim().toLowerCase();
  if (t === 'off' || t === 'none') return NO_HABITS;
  if (t === 'on' || t === 'default' || t === '') return base;
  const out: Record<HabitKind, number> = { ...base };
  for (const pair of t.split(',')) {
    const m = /^\s*([a-z_-]+)\s*=\s*([0-9.]+)\s*$/.exec(pair);
    if (!m) throw new Error(`habit share "${pair}" is not name=share; write e.g. whole-units=0.25,recurring=0.3 (or "off")`);
    const key = (HABIT_ALIASES[m[1]] ?? (m[1].replace(/-/g, '_') in HABIT_KINDS ? m[1].replace(/-/g, '_') : undefined)) as HabitKind | undefined;
    if (!key) throw new Error(`unknown habit "${m[1]}" in "${pair}"; habits: ${Object.keys(HABIT_KINDS).join(', ')}`);
    const v = Number(m[2]);
    if (!(v >= 0 && v <= 1)) throw new Error(`habit share ${m[2]} for ${key} must be between 0 and 1`);
    out[key] = v;
  }
  if (out.zero_tax_refund + out.retirement_drop > 1)
    throw new Error('zero-tax and retirement shares add up to more than 1; a retiree stops the wages a zero-tax refund needs');
  return out;
}

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
  /**
   * Share of taxpayers with each habit ({@link HABIT_KINDS}); missing kinds count 0. Absent:
   * no habits, the idealised batch that test fixtures rely on; the CLI, the demo seed and the
   * ranking benchmark pass {@link DEFAULT_HABIT_SHARES}.
   */
  habits?: Partial<HabitShares>;
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

/** One return in the answer file: its planted kinds (none for a typical return) and its habits. */
export interface ReturnAnswer {
  returnRef: string;
  tin: string;
  taxYear: number;
  /** The preparer id on the return ("" when self-prepared). */
  preparerId: string;
  /** Planted kinds; empty for a typical return. */
  kinds: PlantKind[];
  /** Habits that show on this return. */
  habits: HabitKind[];
  /** What exactly was changed (plants), for a person reading the answers. */
  detail: string;
  /** What the habits look like on this return (e.g. "12 × 850.00 on exp.business.other (rent)"). */
  habitDetail: string;
}
/** One planted return in the answer file (a {@link ReturnAnswer} with at least one kind). */
export type PlantLabel = ReturnAnswer;

/** One return with its lines, the statements about that taxpayer-year, and its answer. */
export interface GeneratedReturn {
  ret: ReturnFileRow;
  lines: LineItemFileRow[];
  statements: StatementFileRow[];
  /** The answer when planted, else null. */
  label: PlantLabel | null;
  /** The answer for every return (kinds empty when typical). */
  answer: ReturnAnswer;
}

/** A whole generated batch. */
export interface GeneratedBatch {
  returns: ReturnFileRow[];
  lineItems: LineItemFileRow[];
  statements: StatementFileRow[];
  /** The planted returns' answers: never written into the batch itself. */
  labels: PlantLabel[];
  /** Every return's answer (plants and habits), in batch order. */
  answers: ReturnAnswer[];
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
  invented_recurring: 2,
  invented_whole_units: 5,
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
  habits: TaxpayerHabits;
}

/** A monthly bill of a recurring-bills filer. */
interface Bill {
  code: LineCode;
  what: string;
  cents: number;
  round: boolean;
  /** A business bill stops when the business does. */
  business: boolean;
}
/** The habits one taxpayer has (drawn once, kept every year). */
interface TaxpayerHabits {
  wholeUnits: boolean;
  firm: boolean;
  zeroTax: boolean;
  bills: Bill[];
  gift: number | null; // cents a month
  /** Index into the years of the year the taxpayer retires, and months worked in it. */
  retire: { year: number; months: number } | null;
}
const NO_TAXPAYER_HABITS: TaxpayerHabits = { wholeUnits: false, firm: false, zeroTax: false, bills: [], gift: null, retire: null };

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
    habits: NO_TAXPAYER_HABITS,
  };
}

/** A bill amount in the filer's style: round to 50 or 100 (rent, standing orders) or with cents. */
function billCents(units: number, round: boolean): number {
  if (!round) return cents(units);
  const step = units >= 500 ? 100 : units >= 100 ? 50 : units >= 20 ? 5 : 1;
  return Math.max(100, Math.round(units / step) * step * 100);
}

/**
 * Draws a taxpayer's habits from their own stream (`hr`), so a taxpayer without habits
 * gets exactly the figures of the idealised batch. Some habits reshape the taxpayer: a
 * zero-tax filer is a low-wage employee without a business, a retiree has savings.
 */
function assignHabits(hr: Rng, tp: Taxpayer, s: HabitShares, firmId: string | null, yearCount: number): void {
  const h: TaxpayerHabits = { wholeUnits: false, firm: false, zeroTax: false, bills: [], gift: null, retire: null };
  if (firmId && !tp.mill && hr.chance(s.large_firm)) {
    h.firm = true;
    tp.preparerId = firmId;
  }
  if (hr.chance(s.zero_tax_refund)) {
    h.zeroTax = true;
    tp.activity = 'none';
    tp.business = null;
    tp.employers = [{ name: hr.pick(EMPLOYERS), wage: Math.min(9_500, hr.logNormal(6_000, 0.35)), withholdRate: 0.06 + 0.08 * hr.next() }];
    for (const b of tp.banks) b.balance = Math.min(b.balance, 2_500);
  }
  // Conditional on not zero-tax, so the retirement share of all taxpayers is as set.
  if (!h.zeroTax && yearCount >= 2 && hr.chance(s.retirement_drop / Math.max(1e-9, 1 - s.zero_tax_refund))) {
    h.retire = { year: hr.int(1, yearCount - 1), months: hr.int(2, 10) };
    if (!tp.employers.length && !tp.business)
      tp.employers.push({ name: hr.pick(EMPLOYERS), wage: hr.logNormal(32_000, 0.45), withholdRate: 0.1 + 0.06 * hr.next() });
    if (!tp.banks.length)
      tp.banks.push({ name: hr.pick(BANKS), balance: hr.logNormal(40_000, 0.8), rate: hr.logNormal(0.025, 0.3), withholds: hr.chance(0.5), reported: true });
  }
  h.wholeUnits = hr.chance(s.whole_units);
  if (hr.chance(s.recurring_bills)) {
    const bz = tp.business;
    if (bz) {
      const costs = bz.scale * bz.expenseRatio;
      const round = hr.chance(0.5);
      h.bills.push({
        code: 'exp.business.other',
        what: hr.pick(['rent', 'premises rent', 'workshop rent']),
        cents: billCents((costs * bz.mix.other * (0.3 + 0.3 * hr.next())) / 12, round),
        round,
        business: true,
      });
      if (hr.chance(0.35))
        h.bills.push({
          code: 'exp.business.other',
          what: 'insurance premium',
          cents: billCents((costs * bz.mix.other * (0.04 + 0.08 * hr.next())) / 12, false),
          round: false,
          business: true,
        });
      if (hr.chance(0.3)) {
        const r = hr.chance(0.4);
        h.bills.push({
          code: 'exp.business.vehicle',
          what: 'vehicle lease instalment',
          cents: billCents((costs * bz.mix.vehicle * (0.3 + 0.3 * hr.next())) / 12, r),
          round: r,
          business: true,
        });
      }
    } else {
      const round = hr.chance(0.5);
      h.bills.push({ code: 'ded.medical', what: 'care plan instalment', cents: billCents(hr.logNormal(90, 0.6), round), round, business: false });
    }
  }
  if (hr.chance(s.monthly_gifts)) {
    h.gift = hr.chance(0.8)
      ? Number(
          hr.weighted({
            '500': 6,
            '1000': 14,
            '1500': 6,
            '2000': 14,
            '2500': 12,
            '3000': 6,
            '4000': 3,
            '5000': 10,
            '7500': 2,
            '10000': 6,
            '15000': 1,
            '20000': 2,
          }),
        )
      : Number(hr.pick(['833', '1250', '1667', '2083', '4167', '350', '750', '1750', '333']));
  }
  tp.habits = h;
}

/** Keeps the lines `keep` says, with the itemised indices following them. */
function filterLines(d: Draft, keep: (l: Line, i: number) => boolean): void {
  const map = new Map<number, number>();
  const lines: Line[] = [];
  d.lines.forEach((l, i) => {
    if (!keep(l, i)) return;
    map.set(i, lines.length);
    lines.push(l);
  });
  d.itemised = d.itemised.filter((i) => map.has(i)).map((i) => map.get(i)!);
  d.lines = lines;
}

/** Scales one employer's wage line, its statement and the withholding line after it. */
function scaleWages(d: Draft, f: number): void {
  const used = new Set<number>();
  d.lines.forEach((l, i) => {
    if (l.code !== 'inc.wages') return;
    const before = l.cents;
    l.cents = Math.max(50, Math.round(before * f));
    const s = d.statements.findIndex((st, k) => !used.has(k) && st.kind === 'wages' && st.cents === before);
    if (s >= 0) {
      used.add(s);
      d.statements[s].cents = l.cents;
    }
    const next = d.lines[i + 1];
    if (next?.code === 'tax.withheld') next.cents = Math.max(50, Math.round(next.cents * f));
  });
}

/**
 * Applies a taxpayer's habits to one year's typical draft (before any plant), and says which
 * habits show on the return and how. Draws only from `hr`.
 */
function applyHabits(hr: Rng, tp: Taxpayer, d: Draft, yearIndex: number): { habits: HabitKind[]; notes: string[]; retired: boolean } {
  const h = tp.habits;
  const habits: HabitKind[] = [];
  const notes: string[] = [];
  let retired = false;
  let months = 12;
  if (h.retire && yearIndex >= h.retire.year) {
    habits.push('retirement_drop');
    if (yearIndex === h.retire.year) {
      months = h.retire.months;
      const f = months / 12;
      scaleWages(d, f);
      for (const l of d.lines) if (l.code === 'inc.business.receipts' || l.code.startsWith('exp.business.')) l.cents = Math.max(50, Math.round(l.cents * f));
      for (const s of d.statements) if (s.kind === 'sales') s.cents = Math.round(s.cents * f);
      d.receipts = d.lines.filter((l) => l.code === 'inc.business.receipts').reduce((a, l) => a + l.cents, 0);
      notes.push(`retired after ${months} months of the year`);
    } else {
      retired = true;
      months = 0;
      filterLines(
        d,
        (l, i) =>
          !(
            l.code === 'inc.wages' ||
            l.code === 'inc.business.receipts' ||
            l.code.startsWith('exp.business.') ||
            (l.code === 'tax.withheld' && d.lines[i - 1]?.code === 'inc.wages')
          ),
      );
      d.statements = d.statements.filter((s) => s.kind === 'interest');
      d.receipts = 0;
      notes.push('retired: interest only');
    }
  }
  if (h.zeroTax) {
    const t = computeTotals(d.lines);
    if (t.tax > 0 && t.wages > 0) scaleWages(d, Math.max(0.2, (ALDERMERE_TAX.allowanceCents - 50_000 - t.interest) / t.wages));
    const after = computeTotals(d.lines);
    if (after.tax === 0 && after.withheld > 0) {
      habits.push('zero_tax_refund');
      notes.push('no tax due; refund = all tax withheld');
    }
  }
  const bills = h.bills.filter((b) => !(b.business && (retired || d.receipts === 0)));
  for (const b of bills) {
    const n = b.business ? months : 12;
    if (n <= 0) continue;
    // A business bill replaces part of that cost line's yearly budget, so the books keep their size.
    if (b.business) {
      const own = d.lines.filter((l, i) => l.code === b.code && d.itemised.includes(i));
      const sum = own.reduce((a, l) => a + l.cents, 0);
      const f = sum > 0 ? Math.max(0.25, (sum - n * b.cents) / sum) : 1;
      for (const l of own) l.cents = Math.max(50, Math.round(l.cents * f));
    }
    for (let k = 0; k < n; k++) d.lines.push({ code: b.code, cents: b.cents });
    notes.push(`${n} × ${formatCents(b.cents)} on ${b.code} (${b.what})`);
  }
  if (bills.length) habits.push('recurring_bills');
  if (h.gift !== null) {
    for (let k = 0; k < 12; k++) d.lines.push({ code: 'ded.charity', cents: h.gift });
    habits.push('monthly_gifts');
    notes.push(`12 × ${formatCents(h.gift)} on ded.charity (standing gift)`);
  }
  if (h.firm) habits.push('large_firm');
  if (h.wholeUnits) {
    habits.push('whole_units');
    notes.push('whole units');
  }
  // Year to year a bill may rise (rent review, premium renewal); a standing gift stays.
  for (const b of h.bills) if (hr.chance(0.35)) b.cents = billCents((b.cents / 100) * hr.logNormal(1.04, 0.03), b.round);
  return { habits, notes, retired };
}

/** The typical figures of one taxpayer-year, before any plant. */
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
  if (tp.charity)
    for (let i = 0; i < Math.max(1, Math.round(tp.charity.gifts * itemisation)); i++) push('ded.charity', cents(rng.logNormal(tp.charity.median, 1.0)), true);
  if (tp.medical)
    for (let i = 0; i < Math.max(1, Math.round(tp.medical.bills * itemisation)); i++) push('ded.medical', cents(rng.logNormal(tp.medical.median, 1.1)), true);
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
function applicableKinds(tp: Taxpayer, d: Draft, yearIndex: number, habitsOn: boolean): Exclude<PlantKind, 'preparer_mill'>[] {
  // Invented figures on a whole-unit filer are filed in whole units like the rest of the return.
  const out: Exclude<PlantKind, 'preparer_mill'>[] = [
    tp.habits.wholeUnits ? 'invented_whole_units' : 'invented_digits',
    'round_amounts',
    'threshold_bunching',
    'totals_mismatch',
    'inflated_deductions',
    'repeated_amounts',
  ];
  const trading = tp.business !== null && d.receipts > 0;
  if (d.statements.some((s) => s.kind !== 'sales')) out.push('unreported_income');
  if (trading) out.push('expenses_exceed_receipts');
  if (d.lines.some((l) => l.code === 'tax.withheld')) out.push('refund_inflated');
  if (trading && yearIndex > 0 && tp.business!.cardShare === null && !tp.habits.retire) out.push('income_drop');
  if (habitsOn) out.push('invented_recurring');
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
    case 'invented_whole_units': {
      ensureItemised(rng, d, 8);
      for (const i of d.itemised) d.lines[i].cents = Math.max(100, Math.round(invent(rng, d.lines[i].cents) / 100) * 100);
      return `${d.itemised.length} itemised entries replaced by invented figures in whole units`;
    }
    case 'invented_recurring': {
      const trading = tp.business !== null && d.receipts > 0;
      const code: LineCode = trading ? (rng.chance(0.7) ? 'exp.business.other' : 'exp.business.vehicle') : rng.chance(0.5) ? 'ded.medical' : 'ded.charity';
      const base = trading ? d.receipts : Math.max(computeTotals(d.lines).income, 2_000_000);
      const yearly = base * (trading ? 0.15 + 0.2 * rng.next() : 0.2 + 0.25 * rng.next());
      // Made up near the wanted size, rounded the way invented figures are (to 10 or 50, mostly no cents).
      const units = (yearly / 100 / 12) * (0.8 + 0.45 * rng.next());
      const step = rng.weighted({ '1': 30, '10': 45, '50': 25 });
      const monthly = Math.min(
        MAX_LINE_AMOUNT_CENTS,
        Math.max(1, Math.round(units / Number(step))) * Number(step) * 100 + (rng.chance(0.7) || tp.habits.wholeUnits ? 0 : rng.int(1, 99)),
      );
      for (let k = 0; k < 12; k++) d.lines.push({ code, cents: monthly });
      return `an invented ${code} entry of ${formatCents(monthly)} entered 12 times (${formatCents(12 * monthly)} a year) against ${trading ? 'receipts' : 'income'} ${formatCents(base)}`;
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
      return `business receipts cut to ${(f * 100).toFixed(0)} % of their typical level; costs unchanged`;
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

/** Rounds every line to whole units (a whole-unit filer), keeping amounts at least 1.00. */
function toWholeUnits(d: Draft): void {
  for (const l of d.lines) l.cents = Math.max(100, Math.round(l.cents / 100) * 100);
}

/** Adds the tot.* and tax.refund lines (as the rules give them, or bent by a totals plant); whole units for a whole-unit filer. */
function finishLines(rng: Rng, d: Draft, kinds: readonly PlantKind[], details: string[], wholeUnits = false): void {
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
  if (wholeUnits) {
    reportedIncome = Math.round(reportedIncome / 100) * 100;
    refund = Math.round(refund / 100) * 100;
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
  const shares: HabitShares = { ...NO_HABITS, ...(opts.habits ?? {}) };
  for (const [k, v] of Object.entries(shares)) if (!(v >= 0 && v <= 1)) throw new Error(`habit share ${k} = ${v} must be between 0 and 1`);
  const habitsOn = Object.values(shares).some((v) => v > 0);
  const taxpayerCount = Math.ceil(opts.returns / years.length);
  const root = createRng(opts.seed);
  const preparerCount = opts.preparers ?? Math.max(5, Math.round(taxpayerCount / 40));
  const preparerIds = Array.from({ length: preparerCount }, (_, i) => `PRP-${String(i + 1).padStart(4, '0')}`);
  // The large firm is one more preparer, beside the mill and the small practices.
  const firmId = shares.large_firm > 0 ? `PRP-${String(preparerCount + 1).padStart(4, '0')}` : null;
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
    // Habits draw from their own stream, so a taxpayer without habits is the idealised one.
    const hr = rng.fork('habits');
    let tin: string;
    // The 000 block, which no numbering scheme issues (see the file comment).
    do tin = `000${String(rng.int(0, 999_999)).padStart(6, '0')}`;
    while (usedTins.has(tin));
    usedTins.add(tin);
    const tp = makeTaxpayer(rng, tin, preparerIds.slice(0, millId ? -1 : undefined), millId, millLeft);
    if (habitsOn) assignHabits(hr, tp, shares, firmId, years.length);
    const tradingAs = tp.business && rng.chance(0.4) ? ` t/a ${businessName(rng, tp.family, tp.activity)}` : '';
    for (let y = 0; y < years.length && emitted < opts.returns; y++) {
      if (y > 0) tp.level *= rng.logNormal(1.03, 0.09);
      emitted++;
      const year = years[y];
      const returnRef = `${prefix}-${year}-${String(emitted).padStart(6, '0')}`;
      const d = draftYear(rng, tp, itemisation);
      const shown = habitsOn ? applyHabits(hr, tp, d, y) : { habits: [] as HabitKind[], notes: [] as string[], retired: false };
      const kinds: PlantKind[] = [];
      const details: string[] = [];
      if (tp.mill) kinds.push('preparer_mill', 'invented_digits');
      else if (rng.chance(restShare)) {
        const options = applicableKinds(tp, d, y, habitsOn);
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
      if (tp.habits.wholeUnits) toWholeUnits(d);
      finishLines(rng, d, kinds, details, tp.habits.wholeUnits);

      const ret: ReturnFileRow = {
        return_ref: returnRef,
        tin,
        tax_year: String(year),
        taxpayer_name: tp.name + tradingAs,
        activity_code: shown.retired ? 'none' : tp.activity,
        preparer_id: tp.preparerId,
        email: tp.email,
        postal_address: tp.address,
      };
      const lines = d.lines.map((l) => ({ return_ref: returnRef, line_code: l.code, amount: formatCents(l.cents) }));
      const statements = d.statements.map((s) => ({ tin, tax_year: String(year), kind: s.kind, payer: s.payer, amount: formatCents(s.cents) }));
      const answer: ReturnAnswer = {
        returnRef,
        tin,
        taxYear: year,
        preparerId: tp.preparerId,
        kinds,
        habits: shown.habits,
        detail: (tp.mill ? [`prepared by the mill ${tp.preparerId}`, ...details] : details).join('; '),
        habitDetail: [...(tp.habits.firm ? [`prepared by the large firm ${tp.preparerId}`] : []), ...shown.notes].join('; '),
      };
      yield { ret, lines, statements, label: kinds.length ? answer : null, answer };
    }
  }
}

/**
 * Generates a whole batch in memory: rows for the three files, and the answer labels.
 * For a ranking benchmark: `generate({ seed: 7, returns: 4000, plantShare: 0.05, years: [2022, 2023, 2024, 2025] })`.
 */
export function generate(opts: GenerateOptions): GeneratedBatch {
  const out: GeneratedBatch = { returns: [], lineItems: [], statements: [], labels: [], answers: [] };
  for (const g of generateReturns(opts)) {
    out.returns.push(g.ret);
    for (const l of g.lines) out.lineItems.push(l);
    for (const s of g.statements) out.statements.push(s);
    if (g.label) out.labels.push(g.label);
    out.answers.push(g.answer);
  }
  return out;
}
