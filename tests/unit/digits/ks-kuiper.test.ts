/**
 * KS and Kuiper verdicts of the digit tests (docs/methods.md#conformity-figures): the critical
 * values in shared/digits/tests.ts KS_KUIPER_CRITICAL, each checked against its source.
 */
import { EXPECTED, evaluateDigitTest, mulberry32 } from '../../../shared/digits';
import { aliasSampler } from '../../../shared/digits/size-aware';
import { goodnessVerdict, KS_KUIPER_CRITICAL } from '../../../shared/digits/tests';

/** Kolmogorov's limiting law: P(sqrt(N) D <= x) = 1 − 2 Σ_{k>=1} (−1)^(k−1) e^(−2 k² x²) (Kolmogorov 1933; math fact). */
function kolmogorovCdf(x: number): number {
  let s = 0;
  for (let k = 1; k <= 100; k++) s += (k % 2 ? 1 : -1) * Math.exp(-2 * k * k * x * x);
  return 1 - 2 * s;
}
/** Kuiper's limiting law: P(sqrt(N) V > x) = 2 Σ_{k>=1} (4 k² x² − 1) e^(−2 k² x²) (Kuiper 1960, Indagationes Math. 63; math fact). */
function kuiperSurvival(x: number): number {
  let s = 0;
  for (let k = 1; k <= 100; k++) s += (4 * k * k * x * x - 1) * Math.exp(-2 * k * k * x * x);
  return 2 * s;
}

describe('asymptotic critical values for a continuous law (used for the second, first-two and last-two tests)', () => {
  it('KS 1.358 and 1.628 are the 5 % and 1 % points of the Kolmogorov distribution', () => {
    const [c5, c1] = KS_KUIPER_CRITICAL.secondDigit.ks;
    expect(1 - kolmogorovCdf(c5)).toBeCloseTo(0.05, 3);
    expect(1 - kolmogorovCdf(c1)).toBeCloseTo(0.01, 3);
  });
  it("Kuiper 1.747 and 2.001 (Stephens 1970, from memory) are the 5 % and 1 % points of Kuiper's limiting law", () => {
    const [c5, c1] = KS_KUIPER_CRITICAL.lastTwo.kuiper;
    expect(kuiperSurvival(c5)).toBeCloseTo(0.05, 3);
    expect(kuiperSurvival(c1)).toBeCloseTo(0.01, 3);
  });
});

describe('first-digit critical values (Morrow 2014, from memory), reproduced by simulation', () => {
  it('about 5 % and 1 % of Benford samples of 1,000 amounts exceed them', () => {
    const draw = aliasSampler(EXPECTED.firstDigit, mulberry32(2014));
    const n = 1000;
    const runs = 4000;
    const c = KS_KUIPER_CRITICAL.firstDigit;
    let ks5 = 0;
    let ks1 = 0;
    let ku5 = 0;
    let ku1 = 0;
    const counts = new Array(9).fill(0);
    for (let r = 0; r < runs; r++) {
      counts.fill(0);
      for (let i = 0; i < n; i++) counts[draw()]++;
      const t = evaluateDigitTest('firstDigit', counts);
      const ks = t.ks! * Math.sqrt(n);
      const ku = t.kuiper! * Math.sqrt(n);
      if (ks > c.ks[0]) ks5++;
      if (ks > c.ks[1]) ks1++;
      if (ku > c.kuiper[0]) ku5++;
      if (ku > c.kuiper[1]) ku1++;
    }
    // 4,000 runs: a binomial share of 0.05 has SD 0.0034, of 0.01 SD 0.0016.
    expect(ks5 / runs).toBeGreaterThan(0.038);
    expect(ks5 / runs).toBeLessThan(0.062);
    expect(ks1 / runs).toBeLessThan(0.017);
    expect(ku5 / runs).toBeGreaterThan(0.038);
    expect(ku5 / runs).toBeLessThan(0.062);
    expect(ku1 / runs).toBeLessThan(0.017);
  });
});

describe('verdicts', () => {
  it('scale the statistic by sqrt(N): D = 0.05 at N = 400 is 1.0 (not rejected), at N = 900 1.5 (5 %), at N = 1600 2.0 (1 %)', () => {
    const c = KS_KUIPER_CRITICAL.secondDigit.ks;
    expect(goodnessVerdict(0.05, 400, c)).toBe('not_rejected');
    expect(goodnessVerdict(0.05, 900, c)).toBe('rejected_5');
    expect(goodnessVerdict(0.05, 1600, c)).toBe('rejected_1');
  });
  it("are part of every test's result; uniform first digits at N = 900 are rejected at 1 %", () => {
    const t = evaluateDigitTest('firstDigit', new Array(9).fill(100));
    expect(t.ksVerdict).toBe('rejected_1');
    expect(t.kuiperVerdict).toBe('rejected_1');
    expect(evaluateDigitTest('firstDigit', new Array(9).fill(0)).ksVerdict).toBeNull();
  });
});
