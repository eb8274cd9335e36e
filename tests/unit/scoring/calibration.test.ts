/**
 * The calibration steps of scoring against worked examples and outside references
 * (docs/methods.md "Scoring components"): each check names its source beside it.
 */
import { mulberry32 } from '../../../shared/digits';
import { simulateMads } from '../../../shared/digits/size-aware';
import {
  benjaminiHochberg,
  digitMadPValue,
  poissonBinomialUpperTail,
  poissonUpperTail,
  shrunkRate,
  simes,
  strengthFromP,
} from '../../../shared/scoring/calibration';
import { binomialUpperTail } from '../../../shared/digits/stats';

/** jstat 1.9.6 (npm, a general-purpose statistics library): an independent check, tests only. */
interface JStat {
  binomial: { cdf(k: number, n: number, p: number): number };
  poisson: { cdf(k: number, l: number): number };
}
// eslint-disable-next-line @typescript-eslint/no-require-imports
const jStat = require('jstat') as JStat;

describe('Benjamini–Hochberg q-values', () => {
  // Benjamini & Hochberg 1995, JRSS-B 57(1), section 4: the 15 p-values of the
  // thrombolysis study; at level 0.05 the procedure rejects the four smallest (Bonferroni
  // three). The q-values below were computed here by hand: q_(i) = min_{j>=i} 15 p_(j) / j.
  const ps = [0.0001, 0.0004, 0.0019, 0.0095, 0.0201, 0.0278, 0.0298, 0.0344, 0.0459, 0.324, 0.4262, 0.5719, 0.6528, 0.759, 1.0];
  it("reproduces the paper's example: four rejections at 0.05", () => {
    const q = benjaminiHochberg(ps);
    expect(q.filter((x) => x <= 0.05)).toHaveLength(4);
  });
  it('gives the hand-computed q-values', () => {
    const q = benjaminiHochberg(ps);
    const byHand = [0.0015, 0.003, 0.0095, 0.035625, 0.0603, 0.063857, 0.063857, 0.0645, 0.0765];
    byHand.forEach((v, i) => expect(q[i]).toBeCloseTo(v, 5));
    expect(q[14]).toBe(1);
  });
  it('keeps the input order and is monotone in p', () => {
    const shuffled = [0.3, 0.001, 0.04, 0.02];
    const q = benjaminiHochberg(shuffled);
    // sorted 0.001 (4×/1 = 0.004), 0.02 (4×/2 = 0.04), 0.04 (4×/3 = 0.0533), 0.3 (0.3): by hand
    expect(q[0]).toBeCloseTo(0.3, 12);
    expect(q[1]).toBeCloseTo(0.004, 12);
    expect(q[2]).toBeCloseTo(0.053333, 5);
    expect(q[3]).toBeCloseTo(0.04, 12);
  });
});

describe('Simes combination', () => {
  // Simes 1986, Biometrika 73(3): p = min_i k p_(i) / i. By hand:
  it('{0.01, 0.02, 0.04} → min(0.03, 0.03, 0.04) = 0.03', () => expect(simes([0.04, 0.01, 0.02])).toBeCloseTo(0.03, 12));
  it('{0.2, 0.03} → min(0.06, 0.2) = 0.06; never above Bonferroni', () => {
    expect(simes([0.2, 0.03])).toBeCloseTo(0.06, 12);
    expect(simes([0.2, 0.03])).toBeLessThanOrEqual(2 * 0.03);
  });
  it('ignores missing tests; none at all gives 1', () => {
    expect(simes([null, 0.02])).toBeCloseTo(0.02, 12);
    expect(simes([])).toBe(1);
  });
  it('keeps its level under independence (math fact: exact for independent uniform p-values), by simulation', () => {
    const rnd = mulberry32(77);
    let hits = 0;
    const runs = 20_000;
    for (let i = 0; i < runs; i++) if (simes([rnd(), rnd(), rnd()]) < 0.05) hits++;
    expect(hits / runs).toBeGreaterThan(0.044);
    expect(hits / runs).toBeLessThan(0.056);
  });
});

describe('Poisson-binomial and Poisson tails', () => {
  it('matches worked examples by hand', () => {
    expect(poissonBinomialUpperTail(1, [0.5, 0.5])).toBeCloseTo(0.75, 12);
    expect(poissonBinomialUpperTail(2, [0.5, 0.5])).toBeCloseTo(0.25, 12);
    // P(X >= 2) for {0.1, 0.2, 0.3}: P(2) = .1·.2·.7 + .1·.8·.3 + .9·.2·.3 = 0.092, P(3) = 0.006
    expect(poissonBinomialUpperTail(2, [0.1, 0.2, 0.3])).toBeCloseTo(0.098, 12);
    expect(poissonBinomialUpperTail(0, [0.1])).toBe(1);
    expect(poissonBinomialUpperTail(2, [0.1])).toBe(0);
  });
  it('equals the binomial tail when all probabilities are equal (jstat binomial cdf)', () => {
    for (const [k, n, p] of [
      [3, 20, 0.05],
      [1, 30, 0.012],
      [6, 40, 0.1],
    ]) {
      const ref = 1 - jStat.binomial.cdf(k - 1, n, p);
      expect(poissonBinomialUpperTail(k, new Array(n).fill(p))).toBeCloseTo(ref, 10);
    }
  });
  it('Poisson upper tail agrees with jstat', () => {
    for (const [k, l] of [
      [1, 0.3],
      [4, 1.2],
      [10, 4],
    ])
      expect(poissonUpperTail(k, l)).toBeCloseTo(1 - jStat.poisson.cdf(k - 1, l), 10);
  });
});

describe('digit MAD p-values (Monte Carlo from the size-aware simulator)', () => {
  it("are uniform under Benford's law: about 5 % below 0.05 and 1 % below 0.01 (fresh seeds, not the cached ones)", () => {
    for (const n of [20, 40]) {
      const sims = simulateMads(n, 3000, 0xabc00 + n);
      let p05 = 0;
      let p01 = 0;
      for (const m of sims.firstDigit) {
        const p = digitMadPValue('firstDigit', n, m)!;
        if (p < 0.05) p05++;
        if (p < 0.01) p01++;
      }
      expect(p05 / 3000).toBeGreaterThan(0.035);
      expect(p05 / 3000).toBeLessThan(0.065);
      expect(p01 / 3000).toBeLessThan(0.02);
    }
  });
  it('are small for made-up first digits (uniform 1..9) and the same on every call (seeded, cached)', () => {
    // MAD of exactly uniform first digits: (1/9) Σ |1/9 − log10(1 + 1/d)| (math fact).
    const uniformMad = [1, 2, 3, 4, 5, 6, 7, 8, 9].reduce((s, d) => s + Math.abs(1 / 9 - Math.log10(1 + 1 / d)), 0) / 9;
    const p = digitMadPValue('firstDigit', 45, uniformMad)!;
    expect(p).toBeLessThan(0.01);
    expect(digitMadPValue('firstDigit', 45, uniformMad)).toBe(p);
  });
});

describe('strength and shrinkage', () => {
  it('strength is 0 at the start p, 1 at the full p, linear in −log10 p between', () => {
    expect(strengthFromP(0.01, 0.01, 1e-6)).toBe(0);
    expect(strengthFromP(1e-6, 0.01, 1e-6)).toBe(1);
    expect(strengthFromP(1e-4, 0.01, 1e-6)).toBeCloseTo(0.5, 12);
    expect(strengthFromP(null, 0.01, 1e-6)).toBe(0);
  });
  it('beta-binomial posterior mean: (k + m s) / (n + s) (by hand: (3 + 0.01·200) / (100 + 200) = 5/300)', () => {
    expect(shrunkRate(3, 100, 0.01, 200)).toBeCloseTo(5 / 300, 12);
    expect(shrunkRate(0, 0, 0.02, 50)).toBeCloseTo(0.02, 12);
  });
  it('binomial tail used by the repeat model: P(Bin(9, 0.01) >= 2) = 1 − 0.99^9 − 9·0.01·0.99^8 (by hand 0.003436)', () => {
    expect(binomialUpperTail(2, 9, 0.01)).toBeCloseTo(1 - 0.99 ** 9 - 9 * 0.01 * 0.99 ** 8, 10);
    expect(binomialUpperTail(2, 9, 0.01)).toBeCloseTo(0.003436, 5);
  });
});
