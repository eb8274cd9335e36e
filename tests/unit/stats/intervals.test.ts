/**
 * Interval methods of shared/stats against published worked examples and jstat.
 */
import { normalQuantile, studentTQuantile } from '../../../shared/stats/distributions';
import { katzRatioInterval, logRatioOfMeansInterval, tInterval, wilsonInterval } from '../../../shared/stats/intervals';
// jstat (npm), an independent check, tests only; it ships no type declarations.
// eslint-disable-next-line @typescript-eslint/no-require-imports
const jStat = require('jstat');

describe('quantiles', () => {
  it('normal quantiles agree with jstat (jStat.normal.inv)', () => {
    for (const p of [0.001, 0.01, 0.025, 0.1, 0.5, 0.9, 0.975, 0.995]) expect(normalQuantile(p)).toBeCloseTo(jStat.normal.inv(p, 0, 1), 7);
  });
  it("Student's t quantiles agree with jstat (jStat.studentt.inv)", () => {
    for (const df of [1, 2, 5, 9, 30, 200])
      for (const p of [0.9, 0.975, 0.995, 0.05]) expect(studentTQuantile(p, df)).toBeCloseTo(jStat.studentt.inv(p, df), 6);
  });
});

describe('wilsonInterval', () => {
  // Newcombe RG (1998). Two-sided confidence intervals for the single proportion: comparison of
  // seven methods. Statistics in Medicine 17:857–872, Table I, method 3 (score, no continuity correction).
  it('81/263 gives 0.2553 to 0.3662 (Newcombe 1998, Table I)', () => {
    const ci = wilsonInterval(81, 263);
    expect(ci.low).toBeCloseTo(0.2553, 4);
    expect(ci.high).toBeCloseTo(0.3662, 4);
    expect(ci.method).toBe('Wilson score interval');
  });
  it('15/148 gives 0.0624 to 0.1605 and 0/20 gives 0 to 0.1611 (Newcombe 1998, Table I; from memory)', () => {
    const a = wilsonInterval(15, 148);
    expect(a.low).toBeCloseTo(0.0624, 4);
    expect(a.high).toBeCloseTo(0.1605, 4);
    const b = wilsonInterval(0, 20);
    expect(b.low).toBe(0);
    expect(b.high).toBeCloseTo(0.1611, 4);
  });
  it('no cases: no estimate; bad counts are refused', () => {
    expect(wilsonInterval(0, 0).estimate).toBeNull();
    expect(() => wilsonInterval(3, 2)).toThrow(/0 ≤ x ≤ n/);
  });
});

describe('tInterval', () => {
  it('mean ± t(0.975, n−1)·s/√n with the t quantile from jstat', () => {
    const v = [120, 80, 200, 150, 95, 310, 60];
    const ci = tInterval(v);
    const mean = jStat.mean(v);
    const half = (jStat.studentt.inv(0.975, v.length - 1) * jStat.stdev(v, true)) / Math.sqrt(v.length);
    expect(ci.estimate).toBeCloseTo(mean, 10);
    expect(ci.low).toBeCloseTo(mean - half, 6);
    expect(ci.high).toBeCloseTo(mean + half, 6);
  });
  it('one value: an estimate without an interval', () => {
    expect(tInterval([5])).toMatchObject({ estimate: 5, low: null, high: null });
  });
});

describe('katzRatioInterval', () => {
  // Katz D, Baptista J, Azen SP, Pike MC (1978). Obtaining confidence intervals for the risk ratio
  // in cohort studies. Biometrics 34:469–474: exp(ln R ± z√(1/x1 − 1/n1 + 1/x2 − 1/n2)).
  // Hand computation (math): 30/100 vs 10/100, R = 3, SE = √(1/30 − 1/100 + 1/10 − 1/100) = 0.336650,
  // 3·exp(∓1.959964·0.336650) = 1.5509 … 5.8033.
  it('30/100 over 10/100: 3 (1.5509 to 5.8033), by hand', () => {
    const ci = katzRatioInterval(30, 100, 10, 100);
    expect(ci.estimate).toBeCloseTo(3, 10);
    expect(ci.low).toBeCloseTo(1.5509, 3);
    expect(ci.high).toBeCloseTo(5.8033, 3);
  });
  it('no events in the comparison group: no ratio', () => {
    expect(katzRatioInterval(3, 10, 0, 10).estimate).toBeNull();
  });
});

describe('logRatioOfMeansInterval', () => {
  it('delta method on the log: hand computation', () => {
    // a: mean 200, sd 100 (n 4: 100, 200, 300, 200 → sd √(20000/3)); b: mean 100.
    const a = [100, 200, 300, 200];
    const b = [50, 100, 150, 100];
    const ci = logRatioOfMeansInterval(a, b);
    const se = Math.sqrt(20000 / 3 / (4 * 200 * 200) + 5000 / 3 / (4 * 100 * 100));
    expect(ci.estimate).toBeCloseTo(2, 10);
    expect(ci.low).toBeCloseTo(2 * Math.exp(-1.959963985 * se), 6);
    expect(ci.high).toBeCloseTo(2 * Math.exp(1.959963985 * se), 6);
  });
});
