import { EXPECTED, MAD_THRESHOLDS, MIN_N_FOR_CONFORMITY, conformityOf, evaluateDigitTest, zStatistic, type DigitTestName } from '../../../shared/digits';
import { aliasSampler, simulateMads } from '../../../shared/digits/size-aware';
import { mulberry32 } from '../../../shared/digits';

interface JStat {
  chisquare: { cdf(x: number, df: number): number };
}
// eslint-disable-next-line @typescript-eslint/no-require-imports
const jStat = require('jstat') as JStat;

describe('Z per digit with continuity correction (Nigrini 2012 after Fleiss 1981, docs/methods.md#conformity-figures)', () => {
  it('subtracts 1/(2N) from |AP - EP|', () => {
    // N = 100, AP = 0.35, EP = 0.30103: (0.04897 - 0.005) / sqrt(0.30103 * 0.69897 / 100)
    const want = (0.35 - 0.30103 - 0.005) / Math.sqrt((0.30103 * 0.69897) / 100);
    expect(zStatistic(0.35, 0.30103, 100)).toBeCloseTo(want, 12);
    expect(want).toBeCloseTo(0.95856, 4); // worked by hand
  });

  it('drops the correction when it exceeds |AP - EP|', () => {
    // N = 10: 1/(2N) = 0.05 > |0.32 - 0.30103| = 0.01897
    expect(zStatistic(0.32, 0.30103, 10)).toBeCloseTo(0.01897 / Math.sqrt((0.30103 * 0.69897) / 10), 12);
  });

  it('is the same for deviations above and below EP', () => {
    expect(zStatistic(0.25, 0.3, 200)).toBeCloseTo(zStatistic(0.35, 0.3, 200), 12);
  });
});

describe('MAD, chi-square, KS, Kuiper and SSD on a worked example (formulas of docs/methods.md#conformity-figures)', () => {
  // 100 first digits: 1 x40, 2 x20, 3 x10, 4..9 x5
  const counts = [40, 20, 10, 5, 5, 5, 5, 5, 5];
  const r = evaluateDigitTest('firstDigit', counts);
  const ep = Array.from(EXPECTED.firstDigit);
  const ap = counts.map((c) => c / 100);

  it('MAD = (1/9) sum |AP - EP|', () => {
    const want = ap.reduce((s, a, i) => s + Math.abs(a - ep[i]), 0) / 9;
    expect(r.mad).toBeCloseTo(want, 15);
    expect(r.mad).toBeCloseTo(0.028249, 5); // by hand: 0.25424 / 9
  });

  it('chi-square = sum (AC - EC)^2 / EC, df 8, p-value from jstat 1.9.6 (npm)', () => {
    const want = counts.reduce((s, c, i) => s + (c - 100 * ep[i]) ** 2 / (100 * ep[i]), 0);
    expect(r.chiSquare).toBeCloseTo(want, 12);
    expect(r.df).toBe(8);
    expect(r.pValue).toBeCloseTo(1 - jStat.chisquare.cdf(want, 8), 10);
    expect(r.chiSquareValid).toBe(false); // N = 100 < 110: expected count of 9 is 4.58 < 5
  });

  it('KS = max |cumulative AP - EP|, Kuiper = D+ + D-, SSD = sum (100 AP - 100 EP)^2', () => {
    let cum = 0;
    let dPlus = 0;
    let dMinus = 0;
    for (let i = 0; i < 9; i++) {
      cum += ap[i] - ep[i];
      dPlus = Math.max(dPlus, cum);
      dMinus = Math.max(dMinus, -cum);
    }
    expect(r.ks).toBeCloseTo(Math.max(dPlus, dMinus), 15);
    expect(r.kuiper).toBeCloseTo(dPlus + dMinus, 15);
    expect(r.ks).toBeCloseTo(0.12288, 4); // by hand: after digit 2, 0.60 - (0.30103 + 0.17609)
    expect(r.ssd).toBeCloseTo(
      ap.reduce((s, a, i) => s + (100 * a - 100 * ep[i]) ** 2, 0),
      10,
    );
  });

  it('Z array in digit order', () => {
    expect(r.z).toHaveLength(9);
    r.z.forEach((z, i) => expect(z).toBeCloseTo(zStatistic(ap[i], ep[i], 100), 12));
  });
});

describe('conformity levels (Nigrini 2012 thresholds, docs/methods.md#conformity-figures)', () => {
  it.each([
    ['firstDigit', 0.006, 'close'],
    ['firstDigit', 0.0061, 'acceptable'],
    ['firstDigit', 0.012, 'acceptable'],
    ['firstDigit', 0.015, 'marginal'],
    ['firstDigit', 0.0151, 'nonconformity'],
    ['secondDigit', 0.008, 'close'],
    ['secondDigit', 0.01, 'acceptable'],
    ['secondDigit', 0.012, 'marginal'],
    ['secondDigit', 0.0121, 'nonconformity'],
    ['firstTwo', 0.0012, 'close'],
    ['firstTwo', 0.0018, 'acceptable'],
    ['firstTwo', 0.0022, 'marginal'],
    ['firstTwo', 0.0023, 'nonconformity'],
  ] as const)('%s MAD %p is %s with enough amounts', (test, mad, level) => {
    expect(conformityOf(test, 100_000, mad, 0.5)).toBe(level);
  });

  it('last two digits by chi-square p-value (common practice, no source)', () => {
    expect(conformityOf('lastTwo', 1000, 0, 0.2)).toBe('close');
    expect(conformityOf('lastTwo', 1000, 0, 0.03)).toBe('acceptable');
    expect(conformityOf('lastTwo', 1000, 0, 0.005)).toBe('marginal');
    expect(conformityOf('lastTwo', 1000, 0, 0.0001)).toBe('nonconformity');
    expect(conformityOf('lastTwo', 499, 0, 0.2)).toBe('too_few');
  });

  it('the fixed thresholds never judge a single return: too_few for every N up to 60 and below each minimum', () => {
    for (const test of ['firstDigit', 'secondDigit', 'firstTwo', 'lastTwo'] as const) {
      for (let n = 0; n <= 60; n++) expect(conformityOf(test, n, 0, 1)).toBe('too_few');
      expect(conformityOf(test, MIN_N_FOR_CONFORMITY[test] - 1, 0, 1)).toBe('too_few');
      expect(conformityOf(test, MIN_N_FOR_CONFORMITY[test], 0, 1)).toBe('close');
    }
  });

  it('the minimums: a Benford sample is called nonconformity at most 1 % of the time there, more often 200 below (seeded simulation, derived here)', () => {
    const draws = 20_000;
    const rate = (test: 'firstDigit' | 'secondDigit' | 'firstTwo', n: number): number => {
      const mads = simulateMads(n, draws, 1000 + n)[test];
      return mads.filter((m) => m > MAD_THRESHOLDS[test][2]).length / draws;
    };
    const measured: Record<string, number> = {};
    for (const test of ['firstDigit', 'secondDigit', 'firstTwo'] as const) {
      const min = MIN_N_FOR_CONFORMITY[test as DigitTestName];
      measured[`${test}@${min}`] = rate(test, min);
      measured[`${test}@${min - 200}`] = rate(test, min - 200);
      expect(measured[`${test}@${min}`]).toBeLessThanOrEqual(0.01);
      expect(measured[`${test}@${min - 200}`]).toBeGreaterThan(0.01);
    }
  });
});

describe('Kolmogorov–Smirnov and Kuiper critical values for first digits (Morrow 2014, from memory, docs/methods.md#conformity-figures)', () => {
  it('sqrt(N) D and sqrt(N) V of Benford samples: 95th and 99th percentiles near 1.148 / 1.420 and 1.321 / 1.579 (seeded simulation, N = 2000)', () => {
    const n = 2000;
    const draws = 20_000;
    const draw = aliasSampler(EXPECTED.firstDigit, mulberry32(2014));
    const counts = new Float64Array(9);
    const ks = new Float64Array(draws);
    const kuiper = new Float64Array(draws);
    for (let r = 0; r < draws; r++) {
      counts.fill(0);
      for (let i = 0; i < n; i++) counts[draw()]++;
      const t = evaluateDigitTest('firstDigit', counts);
      ks[r] = (t.ks as number) * Math.sqrt(n);
      kuiper[r] = (t.kuiper as number) * Math.sqrt(n);
    }
    ks.sort();
    kuiper.sort();
    const q = (xs: Float64Array, p: number) => xs[Math.floor(p * draws)];
    // within 3 %: Monte Carlo error of these quantiles, and N = 2000 is not yet the limit
    expect(Math.abs(q(ks, 0.95) / 1.148 - 1)).toBeLessThan(0.03);
    expect(Math.abs(q(ks, 0.99) / 1.42 - 1)).toBeLessThan(0.03);
    expect(Math.abs(q(kuiper, 0.95) / 1.321 - 1)).toBeLessThan(0.03);
    expect(Math.abs(q(kuiper, 0.99) / 1.579 - 1)).toBeLessThan(0.03);
  });
});
