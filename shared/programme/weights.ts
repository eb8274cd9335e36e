/**
 * Weights learned without the selection bias (issue 17, docs/methods.md#programme-outcomes):
 * a weighted, L2-regularised logistic regression of "closed adjusted" on the components'
 * strengths, random review cases weighted 1 / sampling rate, and a back-test on closed cases
 * held back from the fit. Pure; the Scoring screen shows it (GET /api/scoring/performance).
 */
import { createRng } from '../demo/prng';
import { fitLogistic, type LogisticFit } from '../stats/logistic';

/** One closed case: its components' strengths (0–1, in the order of `keys`), outcome and weight. */
export interface FitCase {
  id: string;
  strengths: readonly number[];
  adjusted: boolean;
  /** Adjusted amount in cents (0 when not adjusted), for the back-test's yield. */
  adjustedCents: number;
  /** 1 for a case the score selected; 1 / sampling rate for a random review case. */
  weight: number;
}

/** Widest 95 % interval (in points) a suggestion may have; wider, the current weight is kept (a rule of this project). */
export const MAX_INTERVAL_POINTS = 100;

/** A suggested weight with its 95 % interval (points at full strength, on the current profile's scale). */
export interface WeightSuggestion {
  key: string;
  current: number;
  /** The fitted weight, or the current one when the interval is too wide to say anything. */
  suggested: number;
  low: number;
  high: number;
  /**
   * False when the interval is wider than {@link MAX_INTERVAL_POINTS} and reaches into the 0–100
   * scale: too few cases where the factor counted. An interval wholly above 100 (or below 0)
   * says where the weight belongs, at the cap (or at 0), however wide it is.
   */
  enoughData: boolean;
}

/** Precision at k and yield of one ranking on the held-back cases. */
export interface BackTestFigures {
  k: number;
  precisionAtK: number;
  yieldCents: number;
}

/** Result of {@link suggestWeights}. */
export interface WeightFit {
  suggestions: WeightSuggestion[];
  fitted: number;
  heldBack: number;
  backTest: { current: BackTestFigures; suggested: BackTestFigures };
  method: string;
}

/**
 * The outcome model: P(closed adjusted | strengths), a logistic fit with each case's weight as
 * given (1 selected, 1 / sampling rate random: Horvitz–Thompson weights, not rescaled, so the
 * cases the score picked keep their full say and the ridge penalty λ stays light against the
 * weighted total).
 */
export function fitOutcomeModel(cases: readonly FitCase[], lambda = 1): LogisticFit {
  return fitLogistic({
    x: cases.map((c) => c.strengths),
    y: cases.map((c) => (c.adjusted ? 1 : 0)),
    weights: cases.map((c) => c.weight),
    lambda,
  });
}

function rank(cases: readonly FitCase[], weights: readonly number[], k: number): BackTestFigures {
  const scored = cases.map((c) => ({ c, s: c.strengths.reduce((t, v, j) => t + v * weights[j], 0) })).sort((a, b) => b.s - a.s || (a.c.id < b.c.id ? -1 : 1));
  const top = scored.slice(0, k);
  return { k, precisionAtK: top.length ? top.filter((t) => t.c.adjusted).length / top.length : 0, yieldCents: top.reduce((t, x) => t + x.c.adjustedCents, 0) };
}

/**
 * Fits the model on about 70 % of the closed cases (a seeded split by case id) and back-tests
 * current against suggested weights on the rest.
 * @param lambda ridge penalty on the slopes (default 1)
 */
export function suggestWeights(
  keys: readonly string[],
  current: readonly number[],
  cases: readonly FitCase[],
  opts: { seed?: string; lambda?: number; holdShare?: number } = {},
): WeightFit {
  const seed = opts.seed ?? 'weights';
  const hold = opts.holdShare ?? 0.3;
  const isHeld = cases.map((c) => createRng(`${seed}:${c.id}`).next() < hold);
  const held = cases.filter((_, i) => isHeld[i]);
  const fit = cases.filter((_, i) => !isHeld[i]);
  const model = fitOutcomeModel(fit, opts.lambda ?? 1);
  const slopes = model.coefficients.slice(1);
  const positive = slopes.reduce((t, c) => t + Math.max(0, c.estimate), 0);
  const scale = positive > 0 ? current.reduce((t, w) => t + w, 0) / positive : 0;
  const suggestions = keys.map((key, j) => {
    const low = Math.round(slopes[j].low * scale * 10) / 10;
    const high = Math.round(slopes[j].high * scale * 10) / 10;
    // An interval wider than the whole 0–100 scale says nothing: the weight stays as it is.
    // Unless it lies wholly beyond one end of the scale: a factor that decides nearly every
    // outcome has a large slope with a wide interval (near separation), and every value in it
    // puts the weight at 100, so the suggestion is 100 whatever the width.
    const beyondScale = low >= 100 || high <= 0;
    const enoughData = high - low <= MAX_INTERVAL_POINTS || beyondScale;
    const fitted = Math.min(100, Math.round(Math.max(0, slopes[j].estimate) * scale * 10) / 10);
    return { key, current: current[j], suggested: enoughData ? fitted : current[j], low, high, enoughData };
  });
  const k = Math.max(1, Math.ceil(held.length / 3));
  return {
    suggestions,
    fitted: fit.length,
    heldBack: held.length,
    backTest: {
      current: rank(held, current, k),
      suggested: rank(
        held,
        suggestions.map((s) => s.suggested),
        k,
      ),
    },
    method: 'weighted L2-regularised logistic regression (IRLS), sandwich standard errors; random review cases weighted 1 / sampling rate',
  };
}
