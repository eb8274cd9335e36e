/**
 * The random review sample (docs/methods.md#programme-outcomes): which returns below the cut
 * a scoring run also opens as cases, whatever their score, so their outcomes estimate the rate
 * of adjustments among the returns the score passes over.
 *
 * Systematic sampling through the returns ordered by stratum (activity code × income band) and,
 * within a stratum, by a seeded random key ("implicit stratification"): every eligible return
 * has the same chance n / N, and each stratum gets its share of the sample to within one
 * return, so a small sample still spreads across activities and incomes. Pure and seeded: the
 * same candidates and seed give the same draw on every machine, whatever their input order.
 */
import { createRng } from '../demo/prng';

/** The default share of a batch drawn for random review (1 %; a profile's `randomShare`, shared/scoring/settings.ts); at least one return is drawn. */
export const DEFAULT_RANDOM_SHARE = 0.01;

/** A return below the cut that may be drawn. */
export interface SampleCandidate {
  id: string;
  activityCode: string;
  incomeBand: string;
}

/** What was drawn, and what a random case stands for. */
export interface RandomSample {
  seed: string;
  share: number;
  /** Returns in the batch (the base of the share). */
  batchSize: number;
  /** Returns below the cut that could be drawn. */
  candidates: number;
  /** Ids drawn, in stratum order. */
  ids: string[];
  /** Chance each candidate had of being drawn: drawn / candidates (a random case's weight is 1 / rate). */
  rate: number;
  /** Per stratum ("activity|band"): candidates and drawn. */
  strata: Record<string, { candidates: number; drawn: number }>;
}

/** How many returns the sample takes: share × batch size, rounded, at least 1, at most the candidates. */
export function sampleSize(batchSize: number, candidates: number, share: number): number {
  if (candidates <= 0 || share <= 0) return 0;
  return Math.min(candidates, Math.max(1, Math.round(share * batchSize)));
}

/**
 * Draws the random review sample.
 * @param batchSize every return in the batch (the share is of the batch, as the issue asks)
 * @example stratifiedSample(rows, { share: 0.01, seed: 'run-42', batchSize: 5000 })
 */
export function stratifiedSample(candidates: readonly SampleCandidate[], opts: { share: number; seed: string; batchSize: number }): RandomSample {
  const n = sampleSize(opts.batchSize, candidates.length, opts.share);
  const rng = createRng(`random-review:${opts.seed}`);
  // A key per return from its id and the seed, so the input order does not matter.
  const keyed = candidates.map((c) => ({ c, stratum: `${c.activityCode}|${c.incomeBand}`, key: createRng(`${opts.seed}:${c.id}`).next() }));
  keyed.sort((a, b) => (a.stratum < b.stratum ? -1 : a.stratum > b.stratum ? 1 : a.key - b.key || (a.c.id < b.c.id ? -1 : 1)));
  const strata: RandomSample['strata'] = {};
  for (const k of keyed) (strata[k.stratum] ??= { candidates: 0, drawn: 0 }).candidates++;
  const ids: string[] = [];
  if (n > 0) {
    const step = keyed.length / n;
    const start = rng.next() * step;
    for (let i = 0; i < n; i++) {
      const k = keyed[Math.min(keyed.length - 1, Math.floor(start + i * step))];
      ids.push(k.c.id);
      strata[k.stratum].drawn++;
    }
  }
  return {
    seed: opts.seed,
    share: opts.share,
    batchSize: opts.batchSize,
    candidates: candidates.length,
    ids,
    rate: candidates.length ? n / candidates.length : 0,
    strata,
  };
}
