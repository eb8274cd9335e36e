/**
 * shared/programme/weights.ts on simulated closed cases (computed here): the true model gives
 * weight to the first two components only; the third is noise the current profile over-weights.
 */
import { createRng } from '../../../shared/demo/prng';
import { suggestWeights, type FitCase } from '../../../shared/programme/weights';

describe('suggestWeights', () => {
  const rng = createRng('weights-test');
  const cases: FitCase[] = [];
  for (let i = 0; i < 4000; i++) {
    const s = [rng.next(), rng.next(), rng.next()];
    const p = 1 / (1 + Math.exp(-(-2 + 3 * s[0] + 1.5 * s[1])));
    const adjusted = rng.chance(p);
    cases.push({ id: `c${i}`, strengths: s, adjusted, adjustedCents: adjusted ? 100_000 : 0, weight: 1 });
  }
  const fit = suggestWeights(['a', 'b', 'noise'], [20, 20, 40], cases, { lambda: 0.1 });

  it('keeps about 30 % back and ranks components as the true model does, the noise interval covering 0', () => {
    expect(fit.heldBack / cases.length).toBeGreaterThan(0.25);
    expect(fit.heldBack / cases.length).toBeLessThan(0.35);
    const [a, b, noise] = fit.suggestions;
    expect(a.suggested).toBeGreaterThan(b.suggested);
    expect(b.suggested).toBeGreaterThan(noise.suggested);
    expect(noise.low).toBeLessThanOrEqual(0);
    expect(noise.high).toBeGreaterThanOrEqual(0);
    // The true ratio a : b is 2 : 1; its interval holds it.
    expect(a.low / b.suggested).toBeLessThan(2);
    expect(a.high / b.suggested).toBeGreaterThan(2);
  });

  it('the back-test: the suggestion finds more adjusted cases in its top third than the current weights', () => {
    expect(fit.backTest.suggested.k).toBe(fit.backTest.current.k);
    expect(fit.backTest.suggested.precisionAtK).toBeGreaterThan(fit.backTest.current.precisionAtK);
    expect(fit.backTest.suggested.yieldCents).toBeGreaterThan(fit.backTest.current.yieldCents);
  });
});
