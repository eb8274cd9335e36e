/**
 * Weighted, L2-regularised logistic regression fitted by iteratively reweighted least squares
 * (Newton–Raphson on the penalised log-likelihood; McCullagh and Nelder 1989, Generalized
 * Linear Models, ch. 4). Case weights carry inverse-probability weights from the selection
 * (docs/methods.md#programme-outcomes): a random-review case stands for 1/sampling-rate
 * returns, so the fit describes all returns, not only those the score picked.
 *
 * Standard errors: the model-based one is √diag(H⁻¹) with H = XᵀWX + λP; with unequal case
 * weights the sandwich H⁻¹ (Σ wᵢ² (yᵢ − pᵢ)² xᵢxᵢᵀ) H⁻¹ is the honest one (it does not
 * pretend a weight of 50 is 50 observations) and is what `se` holds when weights are given.
 */
import { normalQuantile } from './distributions';

/** Input to {@link fitLogistic}. */
export interface LogisticInput {
  /** One row per observation, without the intercept column (it is added). */
  x: readonly (readonly number[])[];
  /** Outcomes, 0 or 1. */
  y: readonly number[];
  /** Case weights (default all 1). */
  weights?: readonly number[];
  /** Ridge penalty λ on the slopes (not the intercept); 0 for an ordinary fit. */
  lambda?: number;
  /** Interval level (default 0.95). */
  level?: number;
  maxIterations?: number;
}

/** A fitted coefficient with its standard error and interval. Index 0 is the intercept. */
export interface Coefficient {
  estimate: number;
  se: number;
  low: number;
  high: number;
}

/** Result of {@link fitLogistic}. */
export interface LogisticFit {
  coefficients: Coefficient[];
  iterations: number;
  converged: boolean;
  /** Which standard error `se` is: 'model' (unweighted) or 'sandwich' (weighted). */
  seKind: 'model' | 'sandwich';
  /** P(y = 1) for a row of covariates (without the intercept). */
  predict(row: readonly number[]): number;
}

/** Inverse of a symmetric positive-definite matrix by Gauss–Jordan with partial pivoting. */
export function invert(m: readonly (readonly number[])[]): number[][] {
  const n = m.length;
  const a = m.map((row, i) => [...row, ...Array.from({ length: n }, (_, j) => (i === j ? 1 : 0))]);
  for (let col = 0; col < n; col++) {
    let piv = col;
    for (let r = col + 1; r < n; r++) if (Math.abs(a[r][col]) > Math.abs(a[piv][col])) piv = r;
    if (Math.abs(a[piv][col]) < 1e-300) throw new RangeError('The matrix is singular: a covariate is constant or repeats another (add a penalty λ > 0)');
    [a[col], a[piv]] = [a[piv], a[col]];
    const d = a[col][col];
    for (let j = 0; j < 2 * n; j++) a[col][j] /= d;
    for (let r = 0; r < n; r++) {
      if (r === col) continue;
      const f = a[r][col];
      if (f === 0) continue;
      for (let j = 0; j < 2 * n; j++) a[r][j] -= f * a[col][j];
    }
  }
  return a.map((row) => row.slice(n));
}

const sigmoid = (t: number) => (t >= 0 ? 1 / (1 + Math.exp(-t)) : Math.exp(t) / (1 + Math.exp(t)));

/**
 * Fits P(y = 1 | x) = 1 / (1 + exp(−(b0 + b·x))).
 * @example fitLogistic({ x: rows, y, weights, lambda: 1 }).coefficients[1].estimate
 */
export function fitLogistic(input: LogisticInput): LogisticFit {
  const { x, y } = input;
  const n = y.length;
  if (x.length !== n) throw new RangeError(`fitLogistic: ${x.length} rows of covariates but ${n} outcomes`);
  if (n === 0) throw new RangeError('fitLogistic: no observations');
  const k = x[0].length + 1;
  const w = input.weights ?? new Array<number>(n).fill(1);
  if (w.length !== n) throw new RangeError(`fitLogistic: ${w.length} weights for ${n} outcomes`);
  const lambda = input.lambda ?? 0;
  const weighted = input.weights !== undefined && input.weights.some((v) => v !== input.weights![0]);
  const row = (i: number) => [1, ...x[i]];
  const beta = new Array<number>(k).fill(0);
  let iterations = 0;
  let converged = false;
  let hessian: number[][] = [];
  for (; iterations < (input.maxIterations ?? 100); iterations++) {
    const H = Array.from({ length: k }, () => new Array<number>(k).fill(0));
    const g = new Array<number>(k).fill(0);
    for (let i = 0; i < n; i++) {
      const xi = row(i);
      let eta = 0;
      for (let j = 0; j < k; j++) eta += beta[j] * xi[j];
      const p = sigmoid(eta);
      const v = w[i] * p * (1 - p);
      const r = w[i] * (y[i] - p);
      for (let a = 0; a < k; a++) {
        g[a] += r * xi[a];
        for (let b = a; b < k; b++) H[a][b] += v * xi[a] * xi[b];
      }
    }
    for (let a = 0; a < k; a++) for (let b = 0; b < a; b++) H[a][b] = H[b][a];
    for (let j = 1; j < k; j++) {
      H[j][j] += lambda;
      g[j] -= lambda * beta[j];
    }
    hessian = H;
    const inv = invert(H);
    let step = 0;
    for (let a = 0; a < k; a++) {
      let d = 0;
      for (let b = 0; b < k; b++) d += inv[a][b] * g[b];
      beta[a] += d;
      step = Math.max(step, Math.abs(d));
    }
    if (step < 1e-10) {
      converged = true;
      iterations++;
      break;
    }
  }
  // Standard errors at the solution (recompute H there).
  const H = Array.from({ length: k }, () => new Array<number>(k).fill(0));
  const meat = Array.from({ length: k }, () => new Array<number>(k).fill(0));
  for (let i = 0; i < n; i++) {
    const xi = row(i);
    let eta = 0;
    for (let j = 0; j < k; j++) eta += beta[j] * xi[j];
    const p = sigmoid(eta);
    const v = w[i] * p * (1 - p);
    const s = w[i] * (y[i] - p);
    for (let a = 0; a < k; a++)
      for (let b = 0; b < k; b++) {
        H[a][b] += v * xi[a] * xi[b];
        meat[a][b] += s * s * xi[a] * xi[b];
      }
  }
  for (let j = 1; j < k; j++) H[j][j] += lambda;
  hessian = H;
  const bread = invert(hessian);
  let cov = bread;
  if (weighted) {
    const t = bread.map((r) => meat[0].map((_, b) => r.reduce((acc, v, c) => acc + v * meat[c][b], 0)));
    cov = t.map((r) => bread[0].map((_, b) => r.reduce((acc, v, c) => acc + v * bread[c][b], 0)));
  }
  const z = normalQuantile(1 - (1 - (input.level ?? 0.95)) / 2);
  const coefficients = beta.map((estimate, j) => {
    const se = Math.sqrt(cov[j][j]);
    return { estimate, se, low: estimate - z * se, high: estimate + z * se };
  });
  return {
    coefficients,
    iterations,
    converged,
    seKind: weighted ? 'sandwich' : 'model',
    predict: (r) => sigmoid(beta[0] + r.reduce((acc, v, j) => acc + v * beta[j + 1], 0)),
  };
}
