/**
 * Worked examples of each risk factor and of the blend. Aldermere's rules and thresholds are
 * invented (docs/design.md#line-codes-and-tax-rules); defaults are common practice, no source (docs/methods.md#risk-factors).
 */
import fc from 'fast-check';
import { computeTotals, type CentsLine } from '../../../shared/returns/line-codes';
import {
  buildPeerBands,
  cashHeavy,
  deductionsLarge,
  OWN_LEVEL_MIN_SHARE,
  expensesNearReceipts,
  incomeBelowStatements,
  incomeDrop,
  refundLarge,
  repeatedAmounts,
  repeatedLosses,
  roundAmounts,
  thresholdBunching,
  totalsMismatch,
  type AmountPopularity,
  type ReturnFacts,
} from '../../../shared/scoring/factors';
import { combineCodeCounts, estimateConcentration, judgePool, pearson, poolPValue } from '../../../shared/scoring/pools';
import { chiSquareSurvival } from '../../../shared/digits/stats';
import { scoreReturn, type ScoreContext } from '../../../shared/scoring/score-return';
import { COMPONENTS, DEFAULT_SCORING_SETTINGS, ScoringSettingsSchema } from '../../../shared/scoring/settings';
import { ScoreBreakdownSchema } from '../../../shared/scoring/breakdown';
import { mulberry32 } from '../../../shared/digits';

const P = DEFAULT_SCORING_SETTINGS.params;
const L = (code: CentsLine['code'], units: number): CentsLine => ({ code, cents: Math.round(units * 100) });
const facts = (lines: CentsLine[], extra: Partial<ReturnFacts> = {}): ReturnFacts => ({
  taxYear: 2024,
  activityCode: 'consulting',
  lines,
  statements: [],
  history: [],
  ...extra,
});
const noPeers = buildPeerBands([], P);

describe('totals do not add up', () => {
  it('passes a return whose totals match its lines', () => {
    const t = computeTotals([L('inc.wages', 50_000), L('tot.income', 50_000), L('tax.withheld', 4_000), L('tax.refund', 200)]);
    // income 50,000 → taxable 38,000 → tax 3,800 → refund 200
    expect(totalsMismatch(t, P).strength).toBe(0);
  });
  it('flags an understated total income, with both figures in the evidence, and puts the gap at stake', () => {
    const t = computeTotals([L('inc.wages', 50_000), L('inc.interest', 1_234.56), L('tot.income', 45_000)]);
    const r = totalsMismatch(t, P);
    expect(r.strength).toBeGreaterThan(0.6);
    expect(r.evidence).toContain('reported total income 45,000.00 but its lines give 51,234.56');
    expect(r.stakeIncomeCents).toBe(623_456);
  });
  it('allows a difference of one unit', () => {
    const t = computeTotals([L('inc.wages', 50_000), L('tot.income', 49_999)]);
    expect(totalsMismatch(t, P).strength).toBe(0);
  });
});

describe('income below third-party statements', () => {
  it('flags wages short of statements by more than max(100, 5 %)', () => {
    const f = facts([L('inc.wages', 30_000)], { statements: [{ kind: 'wages', cents: 4_000_000 }] });
    const r = incomeBelowStatements(f, P);
    expect(r.strength).toBeGreaterThan(0.5);
    expect(r.evidence).toContain('short by 10,000.00, 25 %');
    expect(r.stakeIncomeCents).toBe(1_000_000);
  });
  it('tolerates a 4 % gap', () => {
    const f = facts([L('inc.wages', 38_400)], { statements: [{ kind: 'wages', cents: 4_000_000 }] });
    expect(incomeBelowStatements(f, P).strength).toBe(0);
  });
});

describe('deductions against peers', () => {
  it('flags a charity share above the 95th percentile of the band', () => {
    const rng = mulberry32(7);
    const peers = Array.from({ length: 200 }, () => computeTotals([L('inc.wages', 60_000), L('ded.charity', 300 + rng() * 1500)]));
    const bands = buildPeerBands(peers, P);
    const t = computeTotals([L('inc.wages', 60_000), L('ded.charity', 9_000)]);
    const r = deductionsLarge(t, bands, P);
    expect(r.strength).toBeGreaterThan(0.4);
    expect(r.evidence).toMatch(/charitable gifts are 15\.0 % of income; the 95th percentile of 200 peers with income 50,000–100,000/);
    // strength = ln(share / limit) / ln 8 (full at 8 × the percentile)
    const limit = bands.limits['50,000–100,000'].charity!;
    expect(r.strength).toBeCloseTo(Math.log(0.15 / limit) / Math.log(8), 6);
    const ordinary = deductionsLarge(computeTotals([L('inc.wages', 60_000), L('ded.charity', 600)]), bands, P);
    expect(ordinary.strength).toBe(0);
  });
  it('judges low incomes on max(income, 20,000): 900 of medical bills on 300 of interest is 4.5 %, not 300 %', () => {
    const rng = mulberry32(8);
    const peers = Array.from({ length: 200 }, () => computeTotals([L('inc.interest', 300 + rng() * 5000), L('ded.medical', 200 + rng() * 1200)]));
    const bands = buildPeerBands(peers, P);
    expect(deductionsLarge(computeTotals([L('inc.interest', 300), L('ded.medical', 900)]), bands, P).strength).toBe(0);
  });
  it('learns the ordinary year-to-year rise of deductions from the batch (hand computation)', () => {
    // 30 filers with two years each: 600.00 of gifts, then 600 × (1 + i/10). Each return is set
    // against the other year, so the 60 rises are 1 + i/10 and their inverses; the 95th
    // percentile is sorted element floor(0.95 × 60) = 57 of 0..59, i.e. the third largest, 3.7.
    const figures = Array.from({ length: 30 }, (_, i) => [
      { income: 6_000_000, charity: 60_000, medical: 0, taxpayerId: `t${i}`, taxYear: 2023 },
      { income: 6_000_000, charity: Math.round(60_000 * (1 + i / 10)), medical: 0, taxpayerId: `t${i}`, taxYear: 2024 },
    ]).flat();
    const rise = buildPeerBands(figures, P).deductionRise!;
    expect(rise.n).toBe(60);
    expect(rise.limit).toBeCloseTo(3.7, 9);
  });
  it("weighs gifts large against peers against the filer's own other years too", () => {
    const rng = mulberry32(7);
    const peers = Array.from({ length: 200 }, () => computeTotals([L('inc.wages', 60_000), L('ded.charity', 300 + rng() * 1500)]));
    const bands = { ...buildPeerBands(peers, P), deductionRise: { limit: 3.7, n: 60 } };
    const t = computeTotals([L('inc.wages', 60_000), L('ded.charity', 9_000)]);
    const limit = bands.limits['50,000–100,000'].charity!;
    const g = Math.log(0.15 / limit) / Math.log(8); // against peers, as above
    const year = (charity: number) => ({ totals: computeTotals([L('inc.wages', 60_000), L('ded.charity', charity)]) });
    // No other year on file, or none with deductions: peers alone judge.
    expect(deductionsLarge(t, bands, P, undefined, [], []).strength).toBeCloseTo(g, 6);
    expect(deductionsLarge(t, bands, P, undefined, [], [year(0), year(0)]).strength).toBeCloseTo(g, 6);
    // The filer's usual level: median of 8,000 and 9,500 on 60,000 = 14.58 %; × 3.7 = 54 % > 15 %:
    // within the ordinary rise, so the peer strength counts half (OWN_LEVEL_MIN_SHARE).
    const usual = deductionsLarge(t, bands, P, undefined, [], [year(8_000), year(9_500)]);
    expect(usual.strength).toBeCloseTo(OWN_LEVEL_MIN_SHARE * g, 6);
    expect(usual.evidence).toMatch(
      /deductions in the filer's 2 other years on file were 14\.6 % of income \(median; income counted as at least 20,000\.00\), and 95 % of 60 returns in the batch stay below 3\.7 times their filer's other years; this year's 15\.0 % \(1\.0 times\) is within that, near the filer's usual level: counted at half strength/,
    );
    expect(usual.stakeIncomeCents).toBe(Math.round(deductionsLarge(t, bands, P).stakeIncomeCents * OWN_LEVEL_MIN_SHARE));
    // A jump: usual level 1,500 / 60,000 = 2.5 % (the median; one unusual year does not set it);
    // own limit 2.5 % × 3.7 = 9.25 %; ln(15 / 9.25) / ln 2.5 = 0.528; the smaller of that (at
    // least half of g) and g counts.
    const jump = deductionsLarge(t, bands, P, undefined, [], [year(1_500), year(1_500), year(12_000)]);
    const own = Math.log(0.15 / (0.025 * 3.7)) / Math.log(2.5);
    expect(own).toBeCloseTo(0.528, 3);
    expect(g).toBeGreaterThan(own);
    expect(jump.strength).toBeCloseTo(Math.max(own, OWN_LEVEL_MIN_SHARE * g), 6);
    expect(jump.evidence).toMatch(/this year's 15\.0 % is 6\.0 times that: counted only as far as it goes beyond that rise \(at least half\)/);
    // A clear jump (usual level 1 %: 15 times) counts as the peers say.
    expect(deductionsLarge(t, bands, P, undefined, [], [year(600), year(600)]).strength).toBeCloseTo(g, 6);
  });
  it('compares each business cost line with its peers as a share of receipts (an invented monthly rent)', () => {
    const rng = mulberry32(9);
    const peers = Array.from({ length: 300 }, () => {
      const receipts = 100_000 + rng() * 50_000;
      const other = receipts * (0.05 + 0.1 * rng());
      return { income: 50_000_00, charity: 0, medical: 0, receipts: Math.round(receipts * 100), costs: { 'exp.business.other': Math.round(other * 100) } };
    });
    const bands = buildPeerBands(peers, P);
    const lines = [L('inc.business.receipts', 120_000), ...Array.from({ length: 12 }, () => L('exp.business.other', 3_000))];
    const t = computeTotals(lines);
    const r = deductionsLarge(t, bands, P, { 'exp.business.other': 3_600_000 });
    expect(r.evidence).toMatch(/other business costs are 30\.0 % of receipts; the 95th percentile of 300 returns with receipts/);
    expect(r.strength).toBeGreaterThan(0.25);
    expect(deductionsLarge(t, noPeers, P, { 'exp.business.other': 3_600_000 }).strength).toBe(0);
  });
});

describe('expenses near receipts', () => {
  it("gives the ratio and threshold in words (the issue's example)", () => {
    const t = computeTotals([L('inc.business.receipts', 100_000), L('exp.business.supplies', 97_000)]);
    const r = expensesNearReceipts(t, P);
    expect(r.evidence).toMatch(/^Business expenses are 97 % of receipts \(threshold 90 %\)/);
    expect(r.strength).toBeCloseTo(0.25 + 0.07 / 0.4, 5);
    expect(r.stakeIncomeCents).toBe(3_700_000); // 97,000 − 60 % × 100,000
  });
  it('does not flag 60 %', () => {
    expect(expensesNearReceipts(computeTotals([L('inc.business.receipts', 100_000), L('exp.business.other', 60_000)]), P).strength).toBe(0);
  });
});

describe('repeated losses', () => {
  const lossYear = (y: number) => ({ taxYear: y, totals: computeTotals([L('inc.business.receipts', 10_000), L('exp.business.other', 12_000)]) });
  it('flags 3 loss years of the last 5', () => {
    const f = facts([L('inc.business.receipts', 10_000), L('exp.business.other', 11_000)], { history: [lossYear(2023), lossYear(2022), lossYear(2018)] });
    const r = repeatedLosses(f, computeTotals(f.lines), P);
    expect(r.evidence).toContain('Business losses in 3 of the last 5 years on file (2022, 2023, 2024');
    expect(r.strength).toBe(0.5);
  });
  it('ignores losses older than the window', () => {
    const f = facts([L('inc.business.receipts', 10_000), L('exp.business.other', 11_000)], { history: [lossYear(2019), lossYear(2018)] });
    expect(repeatedLosses(f, computeTotals(f.lines), P).strength).toBe(0);
  });
});

describe('cash-heavy, round amounts, bunching, income drop, refund, repeats', () => {
  it("cash-heavy follows the profile's list", () => {
    expect(cashHeavy(facts([], { activityCode: 'food-service' }), P).strength).toBe(1);
    expect(cashHeavy(facts([], { activityCode: 'consulting' }), P).strength).toBe(0);
  });
  it('round amounts: 6 of 20 ending in 00 against a line rate of 0.01 (Poisson-binomial = Binomial(20, 0.01) here)', () => {
    const amounts = [
      ...Array(6)
        .fill(0)
        .map((_, i) => (i + 2) * 100_000),
      ...Array.from({ length: 14 }, (_, i) => 12_345 + i * 1_017),
    ];
    const lines = amounts.map((cents) => ({ code: 'exp.business.other' as const, cents }));
    const r = roundAmounts(lines, () => 0.01, P);
    // P(X >= 6), X ~ Binomial(20, 0.01): C(20,6)·0.01^6·0.99^14 + … ≈ 3.4e-8 (jstat binomial: 1 − cdf(5, 20, 0.01))
    expect(r.p).toBeCloseTo(3.4e-8, 9);
    expect(r.strength).toBeGreaterThan(0.4);
    expect(r.evidence).toMatch(/^6 of 20 amounts of 100 or more end in 00; ordinary filers of these lines would show about 0\.2/);
    expect(roundAmounts(lines.slice(0, 3), () => 0.01, P).p).toBeCloseTo(1e-6, 8);
    // The same six round amounts on a line where half of all amounts are round (rent in whole hundreds) say little.
    expect(roundAmounts(lines, () => 0.5, P).strength).toBe(0);
    expect(
      roundAmounts(
        [12_345, 67_891, 23_456].map((cents) => ({ code: 'ded.medical' as const, cents })),
        () => 0.01,
        P,
      ).strength,
    ).toBe(0);
  });
  it("bunching: several amounts just under 2,500, against the return's own amounts near it", () => {
    const amounts = [249_000, 248_000, 246_500, 249_900, 12_000, 55_000, 130_000, 7_700, 980_000, 31_000];
    const r = thresholdBunching(amounts, P);
    expect(r.strength).toBeGreaterThan(0.4);
    expect(r.evidence).toContain('just under 2,500.00');
    // Bills spread evenly (on a log scale) over 1,300–4,800: a few fall under 2,500 by chance.
    const spread = Array.from({ length: 40 }, (_, i) => Math.round(130_000 * Math.pow(480_000 / 130_000, i / 39)));
    expect(thresholdBunching(spread, P).strength).toBe(0);
  });
  it('income drop: receipts cut while costs stay', () => {
    const prev = { taxYear: 2023, totals: computeTotals([L('inc.business.receipts', 80_000), L('exp.business.other', 30_000)]) };
    const f = facts([L('inc.business.receipts', 30_000), L('exp.business.other', 30_000)], { history: [prev] });
    const r = incomeDrop(f, computeTotals(f.lines), P);
    expect(r.evidence).toContain('business receipts fell from 80,000.00 in 2023 to 30,000.00 (63 % lower)');
    const mild = facts([L('inc.business.receipts', 50_000), L('exp.business.other', 30_000)], { history: [prev] });
    expect(incomeDrop(mild, computeTotals(mild.lines), P).strength).toBe(0);
  });
  it('income drop at retirement is ordinary: wages confirmed by the statements, a business shrinking with its costs', () => {
    const prev = { taxYear: 2023, totals: computeTotals([L('inc.wages', 60_000), L('inc.business.receipts', 80_000), L('exp.business.other', 40_000)]) };
    const f = facts([L('inc.wages', 15_000), L('inc.business.receipts', 20_000), L('exp.business.other', 10_000)], {
      history: [prev],
      statements: [{ kind: 'wages', cents: 1_500_000 }],
    });
    const r = incomeDrop(f, computeTotals(f.lines), P);
    expect(r.strength).toBe(0);
    expect(r.evidence).toContain("as this year's third-party statements confirm");
    // When the employer's statement says more than the return, the drop is not confirmed.
    const unconfirmed = facts([...f.lines], { history: [prev], statements: [{ kind: 'wages', cents: 6_000_000 }] });
    expect(incomeDrop(unconfirmed, computeTotals(unconfirmed.lines), P).strength).toBeGreaterThan(0);
  });
  it('refund of 95 % of withholding: strong when the lines do not give it, nothing when they do', () => {
    // wages 30,000 → taxable 18,000 → tax 1,800; withheld 2,000 → the rules give 200, 1,900 is claimed
    const claimed = refundLarge(computeTotals([L('inc.wages', 30_000), L('tax.withheld', 2_000), L('tax.refund', 1_900), L('tot.income', 30_000)]), P);
    expect(claimed.strength).toBeGreaterThan(0.5);
    expect(claimed.evidence).toContain('95 % of tax withheld');
    expect(claimed.evidence).toContain('the lines give 200.00');
    // wages 13,000 → taxable 1,000 → tax 100; withheld 2,000 → the rules give 1,900 themselves
    const supported = refundLarge(computeTotals([L('inc.wages', 13_000), L('tax.withheld', 2_000), L('tax.refund', 1_900), L('tot.income', 13_000)]), P);
    expect(supported.strength).toBe(0);
    expect(supported.evidence).toContain("the return's lines give this refund");
  });
  const pop = (share: number, others: number): AmountPopularity => ({ share: () => share, otherTaxpayers: () => others });
  const lines = (xs: number[]) => xs.map((cents) => ({ code: 'exp.business.supplies' as const, cents }));
  it("repeats: the birthday model with the batch's frequency of the amount (worked example)", () => {
    // 10 amounts >= 100, one of them 3 times; pi = 0.01: p_v = P(Bin(9, 0.01) >= 2) = 0.003436 (by hand),
    // Bonferroni over the 8 distinct amounts: 0.02749.
    const amounts = [123_400, 123_400, 123_400, 55_500, 61_234, 71_111, 81_234, 91_234, 101_234, 111_234];
    const r = repeatedAmounts(lines(amounts), false, pop(0.01, 0), null, P);
    expect(r.pWithin).toBeCloseTo(8 * (1 - 0.99 ** 9 - 9 * 0.01 * 0.99 ** 8), 6);
    expect(r.evidence).toContain('1,234.00 × 3');
    // The same repeat of a rare amount (1 in 100,000) is far beyond chance.
    expect(repeatedAmounts(lines(amounts), false, pop(1e-5, 0), null, P).strength).toBeGreaterThan(0.4);
    expect(repeatedAmounts(lines([123_400, 55_500]), false, pop(1e-5, 0), null, P).strength).toBe(0);
  });
  it('shared with other clients: against what a firm of this size shares by chance', () => {
    // s = 0.1 of the batch's other taxpayers are the firm's; an amount 5 others carry turns up
    // at the firm with probability 1 − 0.9^5 = 0.40951 (by hand); two such amounts both shared:
    // P(X >= 2) = 0.40951^2 = 0.16770.
    const r = repeatedAmounts(lines([55_500, 66_600]), false, pop(1e-4, 5), { shared: new Set([55_500, 66_600]), poolShare: 0.1 }, P);
    expect(r.pShared).toBeCloseTo(0.40951 ** 2, 5);
    expect(r.strength).toBe(0);
    expect(r.evidence).toContain('a firm of this size would share about 0.8 by chance');
    // Amounts nobody else in the batch carries cannot be shared by chance: two shared ones are telling.
    const odd = repeatedAmounts(lines([55_512, 66_634]), false, pop(1e-4, 1), { shared: new Set([55_512, 66_634]), poolShare: 0.001 }, P);
    expect(odd.pShared).toBeCloseTo(1e-6, 9);
  });
});

describe('pooled digits', () => {
  const benford = (n: number, seed: number) => {
    const rng = mulberry32(seed);
    const c = new Array(9).fill(0);
    for (let i = 0; i < n; i++) c[Math.floor(10 ** rng()) - 1]++;
    return c;
  };
  it("a large pool drawn from the batch's own profile passes; the fixed thresholds are shown from the pooled minimum on", () => {
    const batch = { 'exp.business.other': benford(20_000, 1) };
    const j = judgePool({ 'exp.business.other': benford(3000, 2) }, batch, Infinity, 1000, P.patternPStart, P.patternPFull);
    expect(j.judgedBy).toBe('fixed');
    expect(j.p!).toBeGreaterThan(0.01);
    expect(j.strength).toBe(0);
  });
  it('flags a pool of invented uniform first digits', () => {
    const batch = { 'exp.business.other': benford(20_000, 3) };
    const j = judgePool({ 'exp.business.other': new Array(9).fill(120) }, batch, Infinity, 1000, P.patternPStart, P.patternPFull);
    expect(j.p!).toBeLessThan(1e-10);
    expect(j.strength).toBe(1);
  });
  it('Dirichlet-multinomial calibration: X² is divided by (n + α)/(1 + α) (by hand: n = 1000, α = 99 → 10.99)', () => {
    const counts = [361, 176, 125, 97, 79, 67, 58, 31, 6]; // n = 1000
    const e = [...Array(9)].map((_, i) => Math.log10(1 + 1 / (i + 1)));
    expect(poolPValue(counts, e, 99)).toBeCloseTo(chiSquareSurvival(pearson(counts, e) / 10.99, 8), 12);
    expect(poolPValue(counts, e, Infinity)).toBeCloseTo(chiSquareSurvival(pearson(counts, e), 8), 12);
    // α estimated from pools whose X²/df is 3 at n = 201: (201 − 3)/(3 − 1) = 99 (by hand)
    expect(
      estimateConcentration([
        { n: 201, x2: 24 },
        { n: 201, x2: 24 },
        { n: 201, x2: 24 },
      ]),
    ).toBeCloseTo(99, 10);
    expect(estimateConcentration([{ n: 500, x2: 6 }])).toBe(Infinity);
  });
  it('says "too few" below the pool minimum; leaving a return out subtracts its counts', () => {
    const j = judgePool({ 'ded.charity': [20, 10, 8, 6, 5, 4, 3, 3, 2] }, {}, Infinity, 1000, P.patternPStart, P.patternPFull);
    expect(j.judgedBy).toBe('none');
    expect(combineCodeCounts({ a: [5, 5, 5, 5, 5, 5, 5, 5, 5] }, { a: [1, 0, 0, 0, 0, 0, 0, 0, 9] }, -1).a).toEqual([4, 5, 5, 5, 5, 5, 5, 5, 0]);
  });
  it('the pooled-minimum setting cannot go below what the fixed thresholds accept', () => {
    const bad = { ...DEFAULT_SCORING_SETTINGS, params: { ...DEFAULT_SCORING_SETTINGS.params, pooledFixedThresholdMinN: 100 } };
    const r = ScoringSettingsSchema.safeParse(bad);
    expect(r.success).toBe(false);
    expect(JSON.stringify(r.error?.issues)).toContain('pooledFixedThresholdMinN');
    expect(ScoringSettingsSchema.safeParse({ ...bad, params: { ...bad.params, pooledFixedThresholdMinN: 800 } }).success).toBe(true);
  });
});

describe('blend', () => {
  const ctx = (over: Partial<ScoreContext> = {}): ScoreContext => ({
    settings: DEFAULT_SCORING_SETTINGS,
    peers: noPeers,
    preparer: null,
    history: null,
    ...over,
  });
  const honestLines = (seed: number) => {
    const rng = mulberry32(seed);
    const lines: CentsLine[] = [L('inc.wages', 30_000 + rng() * 40_000)];
    for (let i = 0; i < 25; i++) lines.push({ code: 'exp.business.other', cents: Math.round(10 ** (3 + rng() * 3)) });
    lines.push({ code: 'inc.business.receipts', cents: 20_000_000 });
    return lines;
  };

  it('sums weight × strength, caps at 100, lists every component, and validates against the shared schema', () => {
    const lines = [L('inc.business.receipts', 100_000), L('exp.business.supplies', 97_000), L('tot.income', 1_000)];
    const s = scoreReturn(facts(lines, { activityCode: 'retail' }), ctx());
    const b = ScoreBreakdownSchema.parse(s.breakdown);
    expect(b.components.map((c) => c.key)).toEqual([...COMPONENTS]);
    const sum = b.components.reduce((a, c) => a + c.points, 0);
    expect(s.riskScore).toBeCloseTo(Math.min(100, sum), 0);
    // Every component adds weight × strength, except group members below their group's strongest (shown, not added).
    for (const c of b.components) expect(c.points === 0 || Math.abs(c.points - c.weight * c.strength) < 0.2).toBe(true);
    expect(b.components.find((c) => c.key === 'cashHeavy')!.points).toBe(DEFAULT_SCORING_SETTINGS.weights.cashHeavy);
    expect(b.selected).toBe(s.riskScore >= DEFAULT_SCORING_SETTINGS.selectionCut);
  });

  it('gives an ordinary return a low score and a stake of zero or near it', () => {
    const s = scoreReturn(facts(honestLines(11)), ctx());
    expect(s.riskScore).toBeLessThan(DEFAULT_SCORING_SETTINGS.selectionCut);
  });

  it('priority = risk score × amount at stake (units)', () => {
    const lines = [L('inc.wages', 90_000), L('tot.income', 60_000)];
    const s = scoreReturn(facts(lines), ctx());
    expect(s.amountAtStakeCents).toBeGreaterThan(0);
    expect(s.priority).toBeCloseTo((s.riskScore * s.amountAtStakeCents) / 100, 2);
    // understated by 30,000: taxable 78,000 → 108,000 crosses the 100,000 bracket edge:
    // tax(108,000) = 4,000 + 12,000 + 2,400 = 18,400; tax(78,000) = 4,000 + 7,600 = 11,600; 6,800 at stake
    expect(s.amountAtStakeCents).toBe(680_000);
  });

  it('property: score is within [0, 100] and never decreases when a weight rises', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 10_000 }), fc.constantFrom(...COMPONENTS), fc.integer({ min: 0, max: 50 }), (seed, key, bump) => {
        const f = facts(honestLines(seed), { activityCode: seed % 2 ? 'retail' : 'none' });
        const a = scoreReturn(f, ctx());
        const heavier = {
          ...DEFAULT_SCORING_SETTINGS,
          weights: { ...DEFAULT_SCORING_SETTINGS.weights, [key]: Math.min(100, DEFAULT_SCORING_SETTINGS.weights[key] + bump) },
        };
        const b = scoreReturn(f, ctx({ settings: heavier }));
        return a.riskScore >= 0 && a.riskScore <= 100 && b.riskScore >= a.riskScore - 1e-9;
      }),
      { numRuns: 150 },
    );
  });

  it('counts a recurring bill once, in plain words (12 × 850.00 rent)', () => {
    const lines = [...honestLines(5), ...Array.from({ length: 12 }, () => L('exp.business.other', 850))];
    const b = scoreReturn(facts(lines), ctx()).breakdown;
    const digits = b.components.find((c) => c.key === 'digits')!;
    expect(digits.evidence).toContain('12 equal payments of 850.00 on other business costs: counted once, as a recurring bill');
    expect(b.components.find((c) => c.key === 'repeatedAmounts')!.strength).toBe(0);
    expect(b.pattern!.p).toBeGreaterThan(0.01);
  });

  it("a group adds only its strongest member (12 × 4,500.00: the issue's 69.3 points were digits + round + repeats added up)", () => {
    const lines = [L('inc.business.receipts', 200_000), ...Array.from({ length: 12 }, () => L('exp.business.supplies', 4_500))];
    const b = scoreReturn(facts(lines), ctx()).breakdown;
    const made = b.components.filter((c) => ['digits', 'roundAmounts', 'repeatedAmounts'].includes(c.key));
    expect(made.filter((c) => c.points > 0).length).toBeLessThanOrEqual(1);
    expect(made.reduce((a, c) => a + c.points, 0)).toBeLessThanOrEqual(Math.max(...made.map((c) => c.weight)));
  });

  it("property: adding a recurring bill to a typical return never raises its pattern evidence by more than one group's worth", () => {
    const groupPoints = (b: ReturnType<typeof scoreReturn>['breakdown']) =>
      b.components.filter((c) => ['digits', 'roundAmounts', 'repeatedAmounts'].includes(c.key)).reduce((a, c) => a + c.points, 0);
    const groupWeight = Math.max(...(['digits', 'roundAmounts', 'repeatedAmounts'] as const).map((k) => DEFAULT_SCORING_SETTINGS.weights[k]));
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 10_000 }),
        fc.integer({ min: 2_000, max: 900_000 }),
        fc.boolean(),
        fc.constantFrom('exp.business.other' as const, 'exp.business.vehicle' as const, 'ded.charity' as const, 'ded.medical' as const),
        fc.constantFrom(4, 6, 12, 13),
        (seed, cents, round, code, n) => {
          const amount = round ? Math.max(100, Math.round(cents / 10_000) * 10_000) : cents;
          const base = honestLines(seed);
          const before = scoreReturn(facts(base), ctx()).breakdown;
          const after = scoreReturn(facts([...base, ...Array.from({ length: n }, () => ({ code, cents: amount }))]), ctx()).breakdown;
          return groupPoints(after) - groupPoints(before) <= groupWeight + 1e-9 && after.pattern!.p >= 0;
        },
      ),
      { numRuns: 120 },
    );
  });

  it('the default settings satisfy their own schema', () => {
    expect(() => ScoringSettingsSchema.parse(DEFAULT_SCORING_SETTINGS)).not.toThrow();
  });
});
