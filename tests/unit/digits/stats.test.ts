import {
  betaRegularized,
  binomialPmf,
  binomialUpperTail,
  chiSquareCdf,
  chiSquareCritical,
  chiSquareSurvival,
  gammaP,
  gammaQ,
  logGamma,
  normalSurvival,
} from '../../../shared/digits/stats';

/** jstat 1.9.6, a general-purpose statistics library from npm: an independent check, tests only. */
interface JStat {
  chisquare: { cdf(x: number, df: number): number; inv(p: number, df: number): number };
  gammap(a: number, x: number): number;
  gammaln(x: number): number;
  ibeta(x: number, a: number, b: number): number;
  binomial: { cdf(k: number, n: number, p: number): number; pdf(k: number, n: number, p: number): number };
  normal: { cdf(x: number, mean: number, sd: number): number };
}
// eslint-disable-next-line @typescript-eslint/no-require-imports
const jStat = require('jstat') as JStat;

describe('chi-square critical values (NIST/SEMATECH e-Handbook of Statistical Methods, table 1.3.6.7.4)', () => {
  // Upper-tail critical values, as quoted in docs/methods.md#conformity-figures, 3 decimals in the table.
  it.each([
    [8, 0.05, 15.507],
    [8, 0.01, 20.09],
    [9, 0.05, 16.919],
    [9, 0.01, 21.666],
    [89, 0.05, 112.022],
    [89, 0.01, 122.942],
  ])('df %i, alpha %p: %p', (df, alpha, critical) => {
    expect(chiSquareCritical(alpha, df)).toBeCloseTo(critical, 3);
    // and the p-value at the tabled value is alpha (to the table's rounding)
    expect(chiSquareSurvival(critical, df)).toBeCloseTo(alpha, 4);
  });
});

describe('chi-square against jstat 1.9.6 (npm, general-purpose statistics library)', () => {
  const dfs = [1, 2, 8, 9, 89, 99];
  const xs = [0.001, 0.5, 1, 3.3, 8, 15.507, 20, 50, 90, 112, 150, 300];
  it.each(dfs)('CDF and p-values for df %i over a grid of x', (df) => {
    for (const x of xs) {
      const want = jStat.chisquare.cdf(x, df);
      expect(Math.abs(chiSquareCdf(x, df) - want)).toBeLessThan(1e-10);
      expect(Math.abs(chiSquareSurvival(x, df) - (1 - want))).toBeLessThan(1e-10);
    }
  });

  it.each(dfs)('critical values at 5 %% and 1 %% for df %i', (df) => {
    for (const alpha of [0.05, 0.01, 0.001]) {
      expect(chiSquareCritical(alpha, df)).toBeCloseTo(jStat.chisquare.inv(1 - alpha, df), 6);
    }
  });

  it('keeps small p-values (no 1 - x cancellation): df 8, x = 200', () => {
    const p = chiSquareSurvival(200, 8);
    expect(p).toBeGreaterThan(0);
    expect(p).toBeLessThan(1e-38);
    // regularized gamma identity P + Q = 1 (math fact) where both are representable
    expect(gammaP(4, 5) + gammaQ(4, 5)).toBeCloseTo(1, 14);
  });

  it('edge values: x = 0 and x = infinity (math fact)', () => {
    expect(chiSquareSurvival(0, 8)).toBe(1);
    expect(chiSquareSurvival(Infinity, 8)).toBe(0);
    expect(chiSquareCdf(0, 8)).toBe(0);
  });
});

describe('log-gamma', () => {
  it('equals ln((n-1)!) exactly computed for n = 1..30 (math fact)', () => {
    let fact = 1n;
    for (let n = 1; n <= 30; n++) {
      if (n > 1) fact *= BigInt(n - 1);
      const want = Math.log(Number(fact));
      expect(Math.abs(logGamma(n) - want)).toBeLessThan(1e-12 * Math.max(1, Math.abs(want)));
    }
  });

  it('Γ(1/2) = sqrt(π) (math fact) and agrees with jstat.gammaln up to 1e7', () => {
    expect(logGamma(0.5)).toBeCloseTo(0.5 * Math.log(Math.PI), 13);
    for (const x of [0.1, 0.7, 1.5, 4.5, 44.5, 49.5, 1000.25, 1e5, 1e7]) {
      const want = jStat.gammaln(x);
      expect(Math.abs(logGamma(x) - want)).toBeLessThan(1e-10 * Math.max(1, Math.abs(want)));
    }
  });
});

describe('incomplete beta, binomial and normal against jstat 1.9.6', () => {
  // jstat's own incomplete beta and log-gamma are good to about 1e-8 here (checked against
  // mpmath below), so the tolerance is that of the reference, not of this code.
  it('I_x(a, b) over a grid', () => {
    for (const [a, b] of [
      [1, 1],
      [2, 5],
      [12, 300],
      [30.5, 2.5],
      [500, 49_501],
    ]) {
      for (const x of [0.001, 0.01, 0.05, 0.3, 0.5, 0.9]) {
        expect(Math.abs(betaRegularized(x, a, b) - jStat.ibeta(x, a, b))).toBeLessThan(5e-8);
      }
    }
  });

  it.each([
    // mpmath 1.3.0, betainc(a, b, 0, x, regularized=True) at 30 significant digits (computed offline)
    [12, 300, 0.01, 0.0000884092427765399109751227368795],
    [30.5, 2.5, 0.9, 0.25361459084774754552226847336],
    [500, 49_501, 0.01, 0.506036861614188788722438890963],
    [2, 5, 0.3, 0.579824999999999976009190660875],
  ])('I_x(%p, %p) at x = %p matches mpmath 1.3.0 to 1e-11 relative', (a, b, x, want) => {
    expect(Math.abs(betaRegularized(x, a, b) / want - 1)).toBeLessThan(1e-11);
  });

  it('binomial upper tail P(X >= k) = 1 - CDF(k - 1)', () => {
    for (const [n, p] of [
      [10, 0.1],
      [50, 0.01],
      [400, 0.01],
      [5000, 0.01],
    ]) {
      for (const k of [0, 1, 2, 3, 5, 8, 12, 40, 60]) {
        if (k > n) continue;
        const want = k === 0 ? 1 : 1 - jStat.binomial.cdf(k - 1, n, p);
        expect(Math.abs(binomialUpperTail(k, n, p) - want)).toBeLessThan(1e-9);
        const pmf = jStat.binomial.pdf(k, n, p);
        expect(Math.abs(binomialPmf(k, n, p) - pmf)).toBeLessThanOrEqual(1e-8 * pmf);
      }
    }
  });

  it('binomial tail by direct summation with BigInt coefficients (math fact), n = 100, p = 0.01', () => {
    // P(X >= 3) = 1 - sum_{k<3} C(100,k) 0.01^k 0.99^(100-k)
    let lower = 0;
    let c = 1n;
    for (let k = 0; k < 3; k++) {
      if (k > 0) c = (c * BigInt(100 - k + 1)) / BigInt(k);
      lower += Number(c) * 0.01 ** k * 0.99 ** (100 - k);
    }
    expect(binomialUpperTail(3, 100, 0.01)).toBeCloseTo(1 - lower, 12);
  });

  it('normal upper tail', () => {
    for (const z of [-3, -1.96, -0.5, 0, 0.5, 1.96, 2.57, 3, 5]) {
      expect(Math.abs(normalSurvival(z) - (1 - jStat.normal.cdf(z, 0, 1)))).toBeLessThan(1e-12);
    }
    // 1.96 and 2.57 are the 5 % and about 1 % two-sided points (Nigrini 2012 after Fleiss 1981)
    expect(2 * normalSurvival(1.96)).toBeCloseTo(0.05, 3);
    expect(2 * normalSurvival(2.57)).toBeCloseTo(0.0102, 3);
  });
});
