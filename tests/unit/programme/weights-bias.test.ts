/**
 * The outcome model of shared/programme/weights.ts on simulated returns (all figures computed
 * here from a seeded generator):
 *
 * 1. Outcomes drawn from a known logistic model: the fit's 95 % intervals hold the known slopes.
 * 2. A biased selection, as a scoring programme makes one: every return above the current cut is
 *    examined, below it only a 2 % random sample. Outcomes follow a saturating curve (as real
 *    adjustment rates do), so no logistic model is exactly right and the answer depends on which
 *    returns the fit sees. The known weights are then those a fit on every return would give (the
 *    census fit, what "describes all returns" means). Unweighted, the examined cases (mostly above
 *    the cut) give other slopes, outside their own intervals; with random cases weighted
 *    1 / sampling rate the intervals hold the census slopes.
 *
 * Facts used: logistic regression is consistent for the slopes when the model is right (McCullagh
 * and Nelder 1989, ch. 4); inverse-probability weighting makes a sample stand for its population
 * (Horvitz and Thompson 1952). Both from memory; the checks themselves are on simulated numbers.
 */
import { createRng } from '../../../shared/demo/prng';
import { fitOutcomeModel, type FitCase } from '../../../shared/programme/weights';

const rng = createRng('weights-bias');
const strengths = () => [0, 1, 2].map(() => (rng.chance(0.3) ? rng.next() : 0));

describe('outcome model: known weights', () => {
  it('recovers the slopes of a known logistic model within their 95 % intervals', () => {
    const truth = [-2.5, 2, 1, 0];
    const cases: FitCase[] = [];
    for (let i = 0; i < 20_000; i++) {
      const s = strengths();
      const p = 1 / (1 + Math.exp(-(truth[0] + truth[1] * s[0] + truth[2] * s[1] + truth[3] * s[2])));
      cases.push({ id: `k${i}`, strengths: s, adjusted: rng.chance(p), adjustedCents: 0, weight: 1 });
    }
    const fit = fitOutcomeModel(cases, 0);
    fit.coefficients.forEach((c, j) => {
      expect(c.low).toBeLessThan(truth[j]);
      expect(c.high).toBeGreaterThan(truth[j]);
    });
  });
});

describe('outcome model: a biased selection', () => {
  // Saturating truth: the chance of an adjustment rises quickly and levels off.
  const chance = (s: number[]) => 0.04 + 0.7 * (1 - Math.exp(-(2.5 * s[0] + 1.2 * s[1])));
  // The current profile over-weights the third component (it predicts nothing).
  const currentScore = (s: number[]) => 30 * s[0] + 20 * s[1] + 40 * s[2];
  const population = Array.from({ length: 60_000 }, (_, i) => {
    const s = strengths();
    return { id: `p${i}`, s, adjusted: rng.chance(chance(s)), score: currentScore(s) };
  });
  const cut = 30;
  const below = population.filter((r) => r.score < cut);
  const rate = 0.02;
  const random = below.filter(() => rng.chance(rate));
  const selected = population.filter((r) => r.score >= cut);
  const asCase = (r: (typeof population)[number], weight: number): FitCase => ({ id: r.id, strengths: r.s, adjusted: r.adjusted, adjustedCents: 0, weight });

  const census = fitOutcomeModel(
    population.map((r) => asCase(r, 1)),
    0,
  ).coefficients.slice(1);
  const plain = fitOutcomeModel(
    [...selected, ...random].map((r) => asCase(r, 1)),
    0,
  ).coefficients.slice(1);
  const weighted = fitOutcomeModel([...selected.map((r) => asCase(r, 1)), ...random.map((r) => asCase(r, 1 / rate))], 0).coefficients.slice(1);

  it('the selection is biased: most examined cases are above the cut', () => {
    expect(selected.length).toBeGreaterThan(3 * random.length);
  });

  it('without the weights, at least one slope misses the census slope by more than its interval', () => {
    const misses = plain.filter((c, j) => census[j].estimate < c.low || census[j].estimate > c.high);
    expect(misses.length).toBeGreaterThan(0);
  });

  it('with the random cases weighted 1 / sampling rate, every interval holds the census slope', () => {
    weighted.forEach((c, j) => {
      expect(c.low).toBeLessThan(census[j].estimate);
      expect(c.high).toBeGreaterThan(census[j].estimate);
    });
  });
});
