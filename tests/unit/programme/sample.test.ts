/** shared/programme/sample.ts: size, spread over strata, determinism, equal chances (computed here). */
import { sampleSize, stratifiedSample, type SampleCandidate } from '../../../shared/programme/sample';

const ACTS = ['retail', 'consulting', 'farming', 'none'];
const BANDS = ['0–20,000', '20,000–50,000', '50,000+'];
function candidates(count: number): SampleCandidate[] {
  return Array.from({ length: count }, (_, i) => ({
    id: `r${String(i).padStart(5, '0')}`,
    activityCode: ACTS[i % 4],
    incomeBand: BANDS[Math.floor(i / 4) % 3],
  }));
}

describe('sampleSize', () => {
  it('1 % of the batch, at least 1, at most the candidates', () => {
    expect(sampleSize(5000, 4800, 0.01)).toBe(50);
    expect(sampleSize(40, 38, 0.01)).toBe(1);
    expect(sampleSize(5000, 20, 0.01)).toBe(20);
    expect(sampleSize(10, 0, 0.01)).toBe(0);
    expect(sampleSize(10, 5, 0)).toBe(0);
  });
});

describe('stratifiedSample', () => {
  const c = candidates(1200);
  it('draws the configured number, each id once', () => {
    const s = stratifiedSample(c, { share: 0.05, seed: 'run-1', batchSize: 1200 });
    expect(s.ids).toHaveLength(60);
    expect(new Set(s.ids).size).toBe(60);
    expect(s.rate).toBeCloseTo(60 / 1200, 12);
  });
  it('each stratum gets its share to within one return', () => {
    const s = stratifiedSample(c, { share: 0.05, seed: 'run-1', batchSize: 1200 });
    expect(Object.keys(s.strata)).toHaveLength(12);
    for (const st of Object.values(s.strata)) expect(Math.abs(st.drawn - st.candidates * 0.05)).toBeLessThanOrEqual(1);
  });
  it('the same seed gives the same draw whatever the input order; another seed another draw', () => {
    const a = stratifiedSample(c, { share: 0.02, seed: 'x', batchSize: 1200 });
    const b = stratifiedSample([...c].reverse(), { share: 0.02, seed: 'x', batchSize: 1200 });
    const d = stratifiedSample(c, { share: 0.02, seed: 'y', batchSize: 1200 });
    expect(b.ids).toEqual(a.ids);
    expect(d.ids).not.toEqual(a.ids);
  });
  it('every candidate has the same chance n/N (over 500 seeds, each drawn about 500 × 24/120 = 100 times)', () => {
    const small = candidates(120);
    const hits = new Map<string, number>();
    for (let s = 0; s < 500; s++)
      for (const id of stratifiedSample(small, { share: 0.2, seed: `s${s}`, batchSize: 120 }).ids) hits.set(id, (hits.get(id) ?? 0) + 1);
    expect(hits.size).toBe(120);
    // Binomial(500, 0.2): mean 100, sd 8.9; 5 sd either side.
    for (const h of hits.values()) expect(Math.abs(h - 100)).toBeLessThan(45);
  });
  it('a batch with no return below the cut draws nothing', () => {
    expect(stratifiedSample([], { share: 0.01, seed: 'z', batchSize: 10 }).ids).toEqual([]);
  });
});
