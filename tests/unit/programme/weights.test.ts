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

describe('suggestWeights: a factor that decides nearly every outcome', () => {
  // Near separation (computed here): 'decides' is set on 97 % of the adjusted cases and 1 % of
  // the others, so its slope is large and its interval wide; 'thin' counted on 8 cases only.
  // Current weights summing to 385 put the scaled slopes on a scale like a real profile's.
  const rng = createRng('weights-separation');
  const cases: FitCase[] = [];
  for (let i = 0; i < 600; i++) {
    const adjusted = rng.chance(0.3);
    const decides = adjusted ? (rng.chance(0.97) ? 1 : 0) : rng.chance(0.01) ? 1 : 0;
    const s = [decides, rng.next(), rng.next(), rng.next(), rng.next(), i < 8 ? 1 : 0];
    cases.push({ id: `s${i}`, strengths: s, adjusted, adjustedCents: adjusted ? 50_000 : 0, weight: 1 });
  }
  const fit = suggestWeights(['decides', 'a', 'b', 'c', 'd', 'thin'], [35, 80, 80, 80, 80, 30], cases);
  const of = (key: string) => fit.suggestions.find((x) => x.key === key)!;

  it('suggests 100 when the whole interval lies above 100, however wide it is', () => {
    const d = of('decides');
    expect(d.high - d.low).toBeGreaterThan(100);
    expect(d.low).toBeGreaterThan(100);
    expect(d.enoughData).toBe(true);
    expect(d.suggested).toBe(100);
  });

  it('keeps the current weight when a wide interval reaches into the scale', () => {
    const t = of('thin');
    expect(t.high - t.low).toBeGreaterThan(100);
    expect(t.low).toBeLessThan(100);
    expect(t.enoughData).toBe(false);
    expect(t.suggested).toBe(30);
  });
});
