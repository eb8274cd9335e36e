/**
 * The preparer pool's null model from profile version 3 on (shared/scoring/pools.ts
 * clientPoolNull, docs/methods.md#calibrated-pattern-evidence): random sets of whole clients,
 * X² fitted by a scaled chi-square with two moments matched (Satterthwaite 1946, Biometrics
 * Bulletin 2:110).
 */
import { mulberry32 } from '../../../shared/digits';
import { chiSquareSurvival } from '../../../shared/digits/stats';
import { clientPoolNull, expectedForPool, pearson, poolPValueUnder, type CodeDigitCounts } from '../../../shared/scoring/pools';
import { buildPeerBands, deductionsLarge, OWN_LEVEL_MIN_SHARE } from '../../../shared/scoring/factors';
import { DEFAULT_SCORING_SETTINGS, ScoringSettingsSchema } from '../../../shared/scoring/settings';
import { computeTotals, type CentsLine } from '../../../shared/returns/line-codes';

const P = DEFAULT_SCORING_SETTINGS.params;
const BENFORD = [...Array(9)].map((_, i) => Math.log10(1 + 1 / (i + 1)));

/** A first digit drawn from Benford's law (10^U for uniform U has Benford's first digit: a math fact). */
const digit = (rng: () => number) => Math.floor(10 ** rng()) - 1;

/** `t` taxpayers of `m` amounts each on one line; `clustered`: all of a taxpayer's amounts share one first digit. */
function taxpayers(t: number, m: number, clustered: boolean, seed: number): CodeDigitCounts[] {
  const rng = mulberry32(seed);
  return Array.from({ length: t }, () => {
    const c = new Array(9).fill(0);
    const d = digit(rng);
    for (let i = 0; i < m; i++) c[clustered ? d : digit(rng)] += 1;
    return { 'exp.business.other': c };
  });
}

/** The batch's per-code counts: the sum of all taxpayers. */
const batchOf = (tps: CodeDigitCounts[]): CodeDigitCounts => ({
  'exp.business.other': tps.reduce((s, t) => s.map((x, i) => x + t['exp.business.other'][i]), new Array(9).fill(0)),
});

describe('preparer pools: the null of random whole clients', () => {
  it('independent amounts: X² of a pool is chi-square(8), so the fit is scale ≈ 1, df ≈ 8 (Pearson 1900; E[X²] = k − 1 exactly for a multinomial, a math fact)', () => {
    const tps = taxpayers(3000, 10, false, 11);
    const fit = clientPoolNull(tps, 30, batchOf(tps), 2000)!;
    // 300 amounts a pool; the fit's mean scale × df is the simulated E[X²] (8 up to sampling: SD of the mean of 2000 draws ≈ 4/√2000 = 0.09).
    expect(fit.scale * fit.df).toBeGreaterThan(7.5);
    expect(fit.scale * fit.df).toBeLessThan(8.5);
    expect(fit.scale).toBeGreaterThan(0.85);
    expect(fit.scale).toBeLessThan(1.18);
    expect(fit.df).toBeGreaterThan(6.5);
    expect(fit.df).toBeLessThan(9.5);
  });

  it("clients whose amounts hang together: E[X²] grows by the design effect 1 + (m − 1)ρ, here m = 10 with ρ = 1 (Kish 1965, Survey Sampling; Rao & Scott 1981, JASA 76:221, for Pearson's X²)", () => {
    const tps = taxpayers(3000, 10, true, 12);
    const fit = clientPoolNull(tps, 30, batchOf(tps), 2000)!;
    // 8 × 10 = 80, less the finite-population factor (1 − 30/3000) ≈ 0.99: about 79.
    expect(fit.scale * fit.df).toBeGreaterThan(72);
    expect(fit.scale * fit.df).toBeLessThan(86);
    // A pool of 30 such clients that is exactly as unusual as chance makes one is then ordinary.
    const x2 = fit.scale * fit.df;
    expect(chiSquareSurvival(x2 / fit.scale, fit.df)).toBeGreaterThan(0.3);
    // …whereas the amount-counting test (chi-square(8), no clustering) calls it far beyond chance.
    expect(chiSquareSurvival(x2, 8)).toBeLessThan(1e-12);
  });

  it('is seeded (the same context gives the same null) and says nothing when there are too few taxpayers to draw from', () => {
    const tps = taxpayers(400, 10, false, 13);
    expect(clientPoolNull(tps, 20, batchOf(tps))).toEqual(clientPoolNull(tps, 20, batchOf(tps)));
    expect(clientPoolNull(tps, 400, batchOf(tps))).toBeNull();
    expect(clientPoolNull(tps, 0, batchOf(tps))).toBeNull();
    // Pools under the tested minimum (110 amounts: 5 clients × 10) are not drawn into the fit.
    expect(clientPoolNull(tps, 5, batchOf(tps))).toBeNull();
  });

  it('the p-value refers X² / scale to chi-square(df) (by hand: scale 1, df 8 is the plain Pearson test)', () => {
    const counts = [361, 176, 125, 97, 79, 67, 58, 31, 6];
    const x2 = pearson(counts, BENFORD);
    expect(poolPValueUnder(counts, BENFORD, { scale: 1, df: 8 })).toBeCloseTo(chiSquareSurvival(x2, 8), 12);
    expect(poolPValueUnder(counts, BENFORD, { scale: 2.5, df: 5 })).toBeCloseTo(chiSquareSurvival(x2 / 2.5, 5), 12);
    // The expected profile of a one-code pool is that code's batch profile (with one Benford pseudo-amount per digit).
    const e = expectedForPool({ a: counts }, { a: counts });
    expect(e[0]).toBeCloseTo((361 + 9 * BENFORD[0]) / (1000 + 9), 12);
  });

  it('stored version-2 settings read the version-2 rules (amounts, no own level for recurring deductions); the default is version 3', () => {
    const { preparerNull: _a, recurringOwnLevel: _b, ...v2params } = P;
    const v2 = ScoringSettingsSchema.parse({ ...DEFAULT_SCORING_SETTINGS, params: v2params });
    expect(v2.params.preparerNull).toBe('amounts');
    expect(v2.params.recurringOwnLevel).toBe(false);
    expect(P.preparerNull).toBe('clients');
    expect(P.recurringOwnLevel).toBe(true);
  });
});

describe("recurring deductions against the filer's own other years (version 3)", () => {
  const L = (code: CentsLine['code'], units: number): CentsLine => ({ code, cents: Math.round(units * 100) });
  // Peers: recurring bills on medical costs reach 8 % of income at the 95th percentile; the batch's ordinary rise 1.5 times.
  const bands = { ...buildPeerBands([], P), recurringLimits: { 'ded.medical': { limit: 0.08, n: 50 } }, deductionRise: { limit: 1.5, n: 100 } };
  const lines = [L('inc.wages', 30_000), ...Array.from({ length: 12 }, () => L('ded.medical', 500))];
  const t = computeTotals(lines);
  const bill = [{ code: 'ded.medical' as const, cents: 50_000, count: 12 }];
  const year = (medical: number) => ({ totals: computeTotals([L('inc.wages', 30_000), L('ded.medical', medical)]) });

  it('a care plan of 12 × 500.00 on 30,000 (20 %) against 8 %: ln(0.2 / 0.08) / ln 2.5 = 1 (by hand), peers alone', () => {
    expect(Math.log(0.2 / 0.08) / Math.log(2.5)).toBeCloseTo(1, 12);
    expect(deductionsLarge(t, bands, P, undefined, bill, []).strength).toBeCloseTo(1, 9);
  });
  it("the same plan in the filer's other years is their usual level: half strength (OWN_LEVEL_MIN_SHARE)", () => {
    const r = deductionsLarge(t, bands, P, undefined, bill, [year(6_000), year(5_800)]);
    expect(r.strength).toBeCloseTo(OWN_LEVEL_MIN_SHARE, 9);
    expect(r.evidence).toMatch(/12 equal payments of 500\.00 on medical costs come to 6,000\.00, 20\.0 % of income/);
    expect(r.evidence).toMatch(/near the filer's usual level: counted at half strength/);
  });
  it('a plan that appears this year only (other years 1 % of income) counts in full; version 2 ignored the other years', () => {
    // own limit 1 % × 1.5 = 1.5 %; ln(20 / 1.5) / ln 2.5 > 1 → 1.
    expect(deductionsLarge(t, bands, P, undefined, bill, [year(300), year(300)]).strength).toBeCloseTo(1, 9);
    const v2 = { ...P, recurringOwnLevel: false };
    expect(deductionsLarge(t, bands, v2, undefined, bill, [year(6_000), year(5_800)]).strength).toBeCloseTo(1, 9);
  });
});

describe('clientPoolNull: the order the taxpayers come in', () => {
  // PostgreSQL hands the taxpayers over in its aggregate's order, which a plan change moves;
  // the same batch must give the same null (a seeded draw over a list in another order did not).
  it('gives the same fit for the taxpayers in any order, and for each one’s codes in any order', () => {
    const rng = mulberry32(77);
    const tps: CodeDigitCounts[] = Array.from({ length: 300 }, (_, i) => {
      const t: CodeDigitCounts = {};
      for (const code of ['inc.wages', 'ded.gifts', 'exp.supplies']) {
        if (rng() < 0.7) t[code] = [...Array(9)].map(() => Math.floor(rng() * 4) + (i % 3));
      }
      return t;
    }).filter((t) => Object.keys(t).length > 0);
    const batch: CodeDigitCounts = {};
    for (const t of tps) for (const [code, c] of Object.entries(t)) batch[code] = (batch[code] ?? new Array(9).fill(0)).map((x, k) => x + c[k]);
    const fit = clientPoolNull(tps, 25, batch)!;
    expect(fit).not.toBeNull();
    const reversed = [...tps].reverse().map((t) => Object.fromEntries(Object.entries(t).reverse()));
    const shuffled = [...tps]
      .map((t, i) => ({ t, k: mulberry32(i + 5)() }))
      .sort((a, b) => a.k - b.k)
      .map((x) => x.t);
    expect(clientPoolNull(reversed, 25, batch)).toEqual(fit);
    expect(clientPoolNull(shuffled, 25, batch)).toEqual(fit);
  });
});
