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
  expensesNearReceipts,
  incomeBelowStatements,
  incomeDrop,
  refundLarge,
  repeatedAmounts,
  repeatedLosses,
  roundAmounts,
  thresholdBunching,
  totalsMismatch,
  type ReturnFacts,
} from '../../../shared/scoring/factors';
import { judgePool } from '../../../shared/scoring/pools';
import { scoreReturn, type ScoreContext } from '../../../shared/scoring/score-return';
import { COMPONENTS, DEFAULT_SCORING_SETTINGS, ScoringSettingsSchema } from '../../../shared/scoring/settings';
import { ScoreBreakdownSchema } from '../../../shared/scoring/breakdown';
import { mulberry32 } from '../../../shared/digits';

const P = DEFAULT_SCORING_SETTINGS.params;
const L = (code: CentsLine['code'], units: number): CentsLine => ({ code, cents: Math.round(units * 100) });
const facts = (lines: CentsLine[], extra: Partial<ReturnFacts> = {}): ReturnFacts => ({ taxYear: 2024, activityCode: 'consulting', lines, statements: [], history: [], ...extra });
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
    const ordinary = deductionsLarge(computeTotals([L('inc.wages', 60_000), L('ded.charity', 600)]), bands, P);
    expect(ordinary.strength).toBe(0);
  });
  it('says so when a band has too few peers', () => {
    expect(deductionsLarge(computeTotals([L('inc.wages', 60_000), L('ded.charity', 9_000)]), noPeers, P).evidence).toMatch(/Too few peers/);
  });
});

describe('expenses near receipts', () => {
  it('gives the ratio and threshold in words (the issue\'s example)', () => {
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
  it('cash-heavy follows the profile\'s list', () => {
    expect(cashHeavy(facts([], { activityCode: 'food-service' }), P).strength).toBe(1);
    expect(cashHeavy(facts([], { activityCode: 'consulting' }), P).strength).toBe(0);
  });
  it('round amounts: 6 of 20 ending in 00 is far beyond Binomial(20, 0.01)', () => {
    const amounts = [...Array(6).fill(0).map((_, i) => (i + 2) * 100_000), ...Array.from({ length: 14 }, (_, i) => 12_345 + i * 1_017)];
    const r = roundAmounts(amounts, P);
    expect(r.strength).toBeGreaterThan(0.4);
    expect(r.evidence).toMatch(/^6 of 20 amounts of 100 or more end in 00 \(30 %/);
    expect(roundAmounts([12_345, 67_891, 23_456], P).strength).toBe(0);
  });
  it('bunching: several amounts just under 2,500', () => {
    const amounts = [249_000, 248_000, 246_500, 249_900, 12_000, 55_000, 130_000, 7_700, 980_000, 31_000];
    const r = thresholdBunching(amounts, P);
    expect(r.strength).toBeGreaterThan(0.4);
    expect(r.evidence).toContain('just under 2,500.00');
  });
  it('income drop: receipts halved and more', () => {
    const prev = { taxYear: 2023, totals: computeTotals([L('inc.business.receipts', 80_000)]) };
    const f = facts([L('inc.business.receipts', 30_000)], { history: [prev] });
    const r = incomeDrop(f, computeTotals(f.lines), P);
    expect(r.evidence).toContain('business receipts fell from 80,000.00 in 2023 to 30,000.00 (63 % lower)');
    const mild = facts([L('inc.business.receipts', 50_000)], { history: [prev] });
    expect(incomeDrop(mild, computeTotals(mild.lines), P).strength).toBe(0);
  });
  it('refund of 95 % of withholding: strong when the lines do not give it, a quarter when they do', () => {
    // wages 30,000 → taxable 18,000 → tax 1,800; withheld 2,000 → the rules give 200, 1,900 is claimed
    const claimed = refundLarge(computeTotals([L('inc.wages', 30_000), L('tax.withheld', 2_000), L('tax.refund', 1_900), L('tot.income', 30_000)]), P);
    expect(claimed.strength).toBeGreaterThan(0.5);
    expect(claimed.evidence).toContain('95 % of tax withheld');
    expect(claimed.evidence).toContain('the lines give 200.00');
    // wages 13,000 → taxable 1,000 → tax 100; withheld 2,000 → the rules give 1,900 themselves
    const supported = refundLarge(computeTotals([L('inc.wages', 13_000), L('tax.withheld', 2_000), L('tax.refund', 1_900), L('tot.income', 13_000)]), P);
    expect(supported.strength).toBeCloseTo(claimed.strength / 4, 5);
    expect(supported.evidence).toContain("the return's lines give this refund");
  });
  it('repeats: same amount on three lines and one shared with another client', () => {
    const r = repeatedAmounts([123_400, 123_400, 123_400, 55_500, 999], new Set([55_500]), P);
    expect(r.evidence).toContain('1,234.00 × 3');
    expect(r.evidence).toContain("other clients' returns of the same preparer: 555.00");
    expect(repeatedAmounts([123_400, 55_500], new Set(), P).strength).toBe(0);
  });
});

describe('pooled digits', () => {
  it('judges a large Benford pool by the fixed thresholds and finds it conforming', () => {
    // 2^k for k = 0..1999 conform to Benford (math fact); as cents of whole amounts
    const pool: number[] = [];
    let x = 1;
    for (let k = 0; k < 50; k++, x *= 2) pool.push(x * 100); // small exact powers
    const rng = mulberry32(3);
    for (let i = 0; i < 3000; i++) pool.push(Math.round(10 ** (2 + rng() * 5)));
    const j = judgePool(pool, 1000);
    expect(j.judgedBy).toBe('fixed');
    expect(['close', 'acceptable']).toContain(j.conformity);
    expect(j.strength).toBe(0);
  });
  it('flags a pool of invented uniform amounts', () => {
    const rng = mulberry32(4);
    const pool = Array.from({ length: 2000 }, () => Math.round((100 + rng() * 900) * 100));
    const j = judgePool(pool, 1000);
    expect(j.conformity).toBe('nonconformity');
    expect(j.strength).toBe(1);
  });
  it('uses the size-aware figure below the pooled minimum', () => {
    const rng = mulberry32(5);
    const j = judgePool(Array.from({ length: 200 }, () => Math.round(10 ** (2 + rng() * 4))), 1000);
    expect(j.judgedBy).toBe('size-aware');
    expect(j.conformity).toBe('too_few');
  });
});

describe('blend', () => {
  const ctx = (over: Partial<ScoreContext> = {}): ScoreContext => ({ settings: DEFAULT_SCORING_SETTINGS, peers: noPeers, preparer: null, history: null, sharedWithClients: new Set(), ...over });
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
    for (const c of b.components) expect(c.points).toBeCloseTo(c.weight * c.strength, 0);
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
        const heavier = { ...DEFAULT_SCORING_SETTINGS, weights: { ...DEFAULT_SCORING_SETTINGS.weights, [key]: Math.min(100, DEFAULT_SCORING_SETTINGS.weights[key] + bump) } };
        const b = scoreReturn(f, ctx({ settings: heavier }));
        return a.riskScore >= 0 && a.riskScore <= 100 && b.riskScore >= a.riskScore - 1e-9;
      }),
      { numRuns: 150 },
    );
  });

  it('the default settings satisfy their own schema', () => {
    expect(() => ScoringSettingsSchema.parse(DEFAULT_SCORING_SETTINGS)).not.toThrow();
  });
});
