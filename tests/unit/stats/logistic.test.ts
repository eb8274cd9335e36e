/**
 * shared/stats/logistic.ts: an exact check against the 2×2 table and a simulation of biased
 * selection with and without inverse-probability weights.
 */
import { createRng } from '../../../shared/demo/prng';
import { fitLogistic } from '../../../shared/stats/logistic';

describe('fitLogistic: one binary covariate (exact solution, math fact)', () => {
  // With a single 0/1 covariate the maximum-likelihood slope is the log odds ratio of the 2×2
  // table, ln(ad/bc), the intercept ln(c/d), and the model-based standard error of the slope is
  // Woolf's √(1/a + 1/b + 1/c + 1/d) (Woolf 1955, Annals of Human Genetics 19:251).
  // Table: x=1: a=30 adjusted, b=70 not; x=0: c=10 adjusted, d=90 not.
  const x: number[][] = [];
  const y: number[] = [];
  const add = (xv: number, yv: number, count: number) => {
    for (let i = 0; i < count; i++) {
      x.push([xv]);
      y.push(yv);
    }
  };
  add(1, 1, 30);
  add(1, 0, 70);
  add(0, 1, 10);
  add(0, 0, 90);
  it('slope = ln(OR), intercept = ln(c/d), SE = √(1/a+1/b+1/c+1/d)', () => {
    const fit = fitLogistic({ x, y });
    expect(fit.converged).toBe(true);
    expect(fit.seKind).toBe('model');
    expect(fit.coefficients[1].estimate).toBeCloseTo(Math.log((30 * 90) / (70 * 10)), 8);
    expect(fit.coefficients[0].estimate).toBeCloseTo(Math.log(10 / 90), 8);
    expect(fit.coefficients[1].se).toBeCloseTo(Math.sqrt(1 / 30 + 1 / 70 + 1 / 10 + 1 / 90), 8);
    expect(fit.predict([1])).toBeCloseTo(0.3, 8);
  });
  it('whole-number weights equal repeated rows (same estimates)', () => {
    const fit = fitLogistic({ x: [[1], [1], [0], [0]], y: [1, 0, 1, 0], weights: [30, 70, 10, 90] });
    expect(fit.coefficients[1].estimate).toBeCloseTo(Math.log((30 * 90) / (70 * 10)), 8);
  });
  it('a ridge penalty pulls the slope toward 0', () => {
    const fit = fitLogistic({ x, y, lambda: 20 });
    expect(fit.coefficients[1].estimate).toBeGreaterThan(0);
    expect(fit.coefficients[1].estimate).toBeLessThan(Math.log((30 * 90) / (70 * 10)));
  });
  it('refuses rows and outcomes of different lengths', () => {
    expect(() => fitLogistic({ x: [[1]], y: [1, 0] })).toThrow(/1 rows of covariates but 2 outcomes/);
  });
});

describe('fitLogistic: biased selection, recovered by inverse-probability weights (computed here, simulation)', () => {
  // Every return has two component strengths x1, x2 in [0, 1] and its outcome ("closed adjusted")
  // is drawn from known weights: logit P = −2.5 + 2·x1 + 1·x2. The score that selects returns
  // adds something the fit does not see but that goes with the outcome (here: a signal present
  // on 60 % of the returns that would end adjusted, as an examiner's judgement or another factor
  // would be). Returns above the cut are all examined; below it a 3 % random sample.
  const TRUE = [-2.5, 2, 1];
  const rng = createRng('logistic-ipw-test');
  const N = 30_000;
  const rows: { x: number[]; y: number; score: number }[] = [];
  for (let i = 0; i < N; i++) {
    const x1 = rng.next();
    const x2 = rng.next();
    const p = 1 / (1 + Math.exp(-(TRUE[0] + TRUE[1] * x1 + TRUE[2] * x2)));
    const y = rng.chance(p) ? 1 : 0;
    const hidden = y === 1 && rng.chance(0.6) ? 1 : 0;
    rows.push({ x: [x1, x2], y, score: x1 + x2 + 1.5 * hidden });
  }
  const sortedScores = rows.map((r) => r.score).sort((a, b) => b - a);
  const cut = sortedScores[Math.floor(N * 0.1)];
  const RATE = 0.03;
  const sample: { x: number[]; y: number; w: number }[] = [];
  for (const r of rows) {
    if (r.score >= cut) sample.push({ x: r.x, y: r.y, w: 1 });
    else if (rng.chance(RATE)) sample.push({ x: r.x, y: r.y, w: 1 / RATE });
  }
  const inside = (c: { low: number; high: number }, v: number) => c.low <= v && v <= c.high;

  it('without the weights the fit misses the known weights', () => {
    const fit = fitLogistic({ x: sample.map((s) => s.x), y: sample.map((s) => s.y) });
    const missed = fit.coefficients.filter((c, j) => !inside(c, TRUE[j]));
    expect(missed.length).toBeGreaterThan(0);
  });
  it('with weights 1/sampling-rate every known weight lies inside its 95 % interval (sandwich SE)', () => {
    const fit = fitLogistic({ x: sample.map((s) => s.x), y: sample.map((s) => s.y), weights: sample.map((s) => s.w) });
    expect(fit.seKind).toBe('sandwich');
    fit.coefficients.forEach((c, j) => expect([j, inside(c, TRUE[j])]).toEqual([j, true]));
  });
});
