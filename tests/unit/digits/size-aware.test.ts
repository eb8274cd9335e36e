import {
  DigitCounter,
  EXPECTED,
  SIZE_AWARE_MIN_N,
  asymptoticMadSpread,
  expectedMad,
  madSpread,
  parseAmounts,
  profileAmounts,
  sizeAwareFigure,
  summarizeCounter,
  type DigitTestName,
} from '../../../shared/digits';
import { madSpreadTableRow, simulateMadMoments, simulateMads } from '../../../shared/digits/size-aware';
import { MAD_SPREAD_TABLE } from '../../../shared/digits/size-aware-table';
import { benfordAmounts, inventedAmounts } from './samples';

const TESTS: DigitTestName[] = ['firstDigit', 'secondDigit', 'firstTwo', 'lastTwo'];

/** E[MAD | n] by enumerating every sequence of n digits with its probability (math fact). */
function bruteForceExpectedMad(p: ArrayLike<number>, n: number): number {
  const k = p.length;
  const counts = new Array<number>(k).fill(0);
  let total = 0;
  const walk = (depth: number, prob: number): void => {
    if (depth === n) {
      let mad = 0;
      for (let i = 0; i < k; i++) mad += Math.abs(counts[i] / n - p[i]);
      total += (prob * mad) / k;
      return;
    }
    for (let i = 0; i < k; i++) {
      counts[i]++;
      walk(depth + 1, prob * p[i]);
      counts[i]--;
    }
  };
  walk(0, 1);
  return total;
}

describe('expected MAD under conformity, exact (De Moivre; Diaconis & Zabell 1991)', () => {
  it.each([
    ['firstDigit', 1],
    ['firstDigit', 2],
    ['firstDigit', 4],
    ['secondDigit', 3],
    ['lastTwo', 2],
  ] as const)('%s at n = %i equals full enumeration (math fact)', (test, n) => {
    expect(expectedMad(test, n)).toBeCloseTo(bruteForceExpectedMad(EXPECTED[test], n), 13);
  });

  it('tends to the docs/methods.md#small-samples constants sqrt(2/pi) mean sqrt(p(1-p)) / sqrt(N): 0.2349, 0.2389, 0.0794', () => {
    const n = 1_000_000;
    const quoted: Array<[DigitTestName, number]> = [
      ['firstDigit', 0.2349],
      ['secondDigit', 0.2389],
      ['firstTwo', 0.0794],
    ];
    for (const [t, c] of quoted) {
      const p = Array.from(EXPECTED[t]);
      const limit = (Math.sqrt(2 / Math.PI) * p.reduce((s, q) => s + Math.sqrt(q * (1 - q)), 0)) / p.length;
      expect(Math.abs(limit - c)).toBeLessThan(1e-4); // the constant, to the 4 decimals quoted
      expect(Math.abs(expectedMad(t, n) * Math.sqrt(n) - limit)).toBeLessThan(1e-4);
    }
    // and at N = 30 it is 0.043, three times the 0.015 nonconformity line (docs/methods.md#small-samples)
    expect(expectedMad('firstDigit', 30)).toBeCloseTo(0.043, 3);
  });

  it('agrees with the seeded simulation mean within 4 standard errors (n = 20, 30, 60, 500)', () => {
    for (const n of [20, 30, 60, 500]) {
      const draws = 20_000;
      const sim = simulateMadMoments(n, draws, 77 + n);
      for (const t of TESTS) {
        const se = sim[t].sd / Math.sqrt(draws);
        expect(Math.abs(sim[t].mean - expectedMad(t, n))).toBeLessThan(4 * se + 1e-12);
      }
    }
  });

  it('docs/methods.md#small-samples "computed here": P(first-digit MAD > 0.015) is 0.998 at N = 30, 0.92 at 100, 0.33 at 300', () => {
    const share = (n: number) => {
      const mads = simulateMads(n, 20_000, 4242 + n).firstDigit;
      return mads.filter((m) => m > 0.015).length / mads.length;
    };
    expect(share(30)).toBeCloseTo(0.998, 2);
    expect(Math.abs(share(100) - 0.92)).toBeLessThan(0.01);
    expect(Math.abs(share(300) - 0.33)).toBeLessThan(0.015);
  });
});

describe('spread of the MAD: seeded simulation table and normal approximation', () => {
  it.each([30, 100])('table row n = %i is rebuilt exactly by the seeded simulation', (n) => {
    const i = MAD_SPREAD_TABLE.n.indexOf(n);
    const row = madSpreadTableRow(n);
    for (const t of TESTS) expect(row[t]).toBe(MAD_SPREAD_TABLE[t][i]);
  });

  it('table and normal approximation (folded-normal moments, from memory) agree within 3 % at N = 2000', () => {
    const i = MAD_SPREAD_TABLE.n.indexOf(2000);
    for (const t of TESTS) {
      const tabled = MAD_SPREAD_TABLE[t][i] / Math.sqrt(2000);
      expect(Math.abs(tabled / asymptoticMadSpread(t, 2000) - 1)).toBeLessThan(0.03);
    }
  });

  it('madSpread has no step where the table ends, and scales as 1/sqrt(N) far beyond it', () => {
    for (const t of TESTS) {
      expect(madSpread(t, 2001) / madSpread(t, 2000)).toBeCloseTo(1, 3);
      expect(madSpread(t, 1e8) / asymptoticMadSpread(t, 1e8)).toBeCloseTo(1, 4);
      // interpolation between grid points stays between the neighbours
      const mid = madSpread(t, 105) * Math.sqrt(105);
      const lo = madSpread(t, 100) * Math.sqrt(100);
      const hi = madSpread(t, 110) * Math.sqrt(110);
      expect(mid).toBeGreaterThanOrEqual(Math.min(lo, hi) - 1e-15);
      expect(mid).toBeLessThanOrEqual(Math.max(lo, hi) + 1e-15);
    }
  });
});

describe('size-aware verdict', () => {
  const measured: string[] = [];
  afterAll(() => {
    // Measured rates, printed for the report (seeded: the same on every run).
    process.stdout.write(`\nsize-aware verdict, measured rates:\n${measured.join('\n')}\n`);
  });

  it('too_few below the stated minimum, nulls when there are no amounts', () => {
    expect(sizeAwareFigure('firstDigit', 0, null)).toMatchObject({ verdict: 'too_few', zScore: null, expectedMad: null });
    expect(sizeAwareFigure('firstDigit', SIZE_AWARE_MIN_N.firstDigit - 1, 0.9).verdict).toBe('too_few');
    expect(sizeAwareFigure('firstDigit', SIZE_AWARE_MIN_N.firstDigit, 0.9).verdict).toBe('high');
    expect(sizeAwareFigure('firstTwo', 49, 0.5).verdict).toBe('too_few');
  });

  it('cut-offs: z < 2 within_expected, 2 <= z < 3 elevated, z >= 3 high (product choice, no source)', () => {
    const n = 30;
    const at = (z: number) => expectedMad('firstDigit', n) + z * madSpread('firstDigit', n);
    expect(sizeAwareFigure('firstDigit', n, at(1.99)).verdict).toBe('within_expected');
    expect(sizeAwareFigure('firstDigit', n, at(2.01)).verdict).toBe('elevated');
    expect(sizeAwareFigure('firstDigit', n, at(3.01)).verdict).toBe('high');
    expect(sizeAwareFigure('firstDigit', n, at(-1)).verdict).toBe('within_expected');
  });

  it.each([20, 30, 60])('Benford samples (seeded, log-uniform amounts) are within_expected at least 95 %% of 1000 draws at N = %i', (n) => {
    let within = 0;
    for (let d = 0; d < 1000; d++) {
      if (profileAmounts(benfordAmounts(n * 100_000 + d, n)).sizeAware.verdict === 'within_expected') within++;
    }
    measured.push(`  Benford amounts, N = ${n}: within_expected ${(within / 10).toFixed(1)} % of 1000`);
    expect(within / 1000).toBeGreaterThanOrEqual(0.95);
  });

  it.each([
    // lower bounds set below the measured rates (about 47 %, 70 %, 95 %; see the printed summary)
    [20, 0.4],
    [30, 0.6],
    [60, 0.9],
  ])('invented amounts (uniform on [100, 10000)) are flagged at N = %i, rate > %p of 1000 draws', (n, floor) => {
    let flagged = 0;
    let high = 0;
    for (let d = 0; d < 1000; d++) {
      const v = profileAmounts(inventedAmounts(n * 100_000 + d, n)).sizeAware.verdict;
      if (v === 'elevated' || v === 'high') flagged++;
      if (v === 'high') high++;
    }
    measured.push(`  invented amounts, N = ${n}: flagged (elevated or high) ${(flagged / 10).toFixed(1)} %, high ${(high / 10).toFixed(1)} % of 1000`);
    expect(flagged / 1000).toBeGreaterThan(floor);
  });

  it('the per-return fast path (reused DigitCounter + summarizeCounter) gives the profile figures', () => {
    const counter = new DigitCounter();
    for (const seed of [1, 2, 3]) {
      const amounts = [...benfordAmounts(seed, 40), -12.5, 0, 7];
      const profile = profileAmounts(amounts);
      counter.reset();
      counter.addAll(parseAmounts(amounts));
      const quick = summarizeCounter(counter);
      for (const t of TESTS) {
        expect(quick.n[t]).toBe(profile[t].n);
        expect(quick.mad[t]).toBeCloseTo(profile[t].mad as number, 15);
        expect(quick.sizeAware[t]).toEqual(profile.sizeAwareByTest[t]);
      }
      expect(quick.verdict).toBe(profile.sizeAware.verdict);
      expect(summarizeCounter(counter, 'negative').n.firstDigit).toBe(1);
    }
  });
});
