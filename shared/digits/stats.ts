/**
 * Special functions and distributions the digit tests need, written here so shared/ has no
 * statistics dependency (jstat is used only in the tests, as an independent check).
 *
 * Sources: Press, Teukolsky, Vetterling & Flannery, Numerical Recipes, 3rd ed. (2007),
 * sections 6.1 (log-gamma), 6.2 (incomplete gamma: series and Lentz continued fraction),
 * 6.4 (incomplete beta: continued fraction); Abramowitz & Stegun (1964) 6.5 and 26.4
 * (chi-square as a gamma distribution), 26.5 (binomial tail as an incomplete beta).
 * The Lanczos coefficients (g = 7, 9 terms, as published by P. Godfrey) are from memory;
 * the tests check log-gamma against exact factorials and against jstat.
 */

const LANCZOS_G = 7;
const LANCZOS_COEF = [
  0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059, 12.507343278686905, -0.13857109526572012,
  9.9843695780195716e-6, 1.5056327351493116e-7,
];
const HALF_LOG_2PI = 0.5 * Math.log(2 * Math.PI);

/**
 * ln Γ(x) for x > 0 by the Lanczos approximation (about 15 significant digits):
 * Γ(x) = sqrt(2π) t^(x - 1/2) e^(-t) A(x), t = x + g - 1/2.
 * Uses the reflection formula Γ(x)Γ(1-x) = π / sin(πx) below 0.5.
 *
 * @param x the argument, x > 0
 * @returns ln Γ(x)
 */
export function logGamma(x: number): number {
  if (x < 0.5) return Math.log(Math.PI / Math.abs(Math.sin(Math.PI * x))) - logGamma(1 - x);
  const y = x - 1;
  let a = LANCZOS_COEF[0];
  const t = y + LANCZOS_G + 0.5;
  for (let i = 1; i < LANCZOS_COEF.length; i++) a += LANCZOS_COEF[i] / (y + i);
  return HALF_LOG_2PI + (y + 0.5) * Math.log(t) - t + Math.log(a);
}

/**
 * ln of the binomial coefficient C(n, k) = ln n! - ln k! - ln (n-k)!.
 *
 * @param n trials, n >= 0
 * @param k successes, 0 <= k <= n
 * @returns ln C(n, k)
 */
export function logChoose(n: number, k: number): number {
  return logGamma(n + 1) - logGamma(k + 1) - logGamma(n - k + 1);
}

const EPS = 1e-15;
const TINY = 1e-300;
const MAX_ITER = 100_000;

/**
 * Regularized lower incomplete gamma P(a, x) = γ(a, x) / Γ(a).
 * Series for x < a + 1, continued fraction for Q otherwise (Numerical Recipes 6.2).
 *
 * @param a shape, a > 0
 * @param x upper limit, x >= 0
 * @returns P(a, x) in [0, 1]
 */
export function gammaP(a: number, x: number): number {
  if (!(a > 0) || Number.isNaN(x)) return NaN;
  if (x <= 0) return 0;
  if (x === Infinity) return 1;
  return x < a + 1 ? gammaSeries(a, x) : 1 - gammaContinuedFraction(a, x);
}

/**
 * Regularized upper incomplete gamma Q(a, x) = 1 - P(a, x), computed directly (no
 * subtraction from 1 in the tail, so small p-values keep their precision).
 *
 * @param a shape, a > 0
 * @param x lower limit, x >= 0
 * @returns Q(a, x) in [0, 1]
 */
export function gammaQ(a: number, x: number): number {
  if (!(a > 0) || Number.isNaN(x)) return NaN;
  if (x <= 0) return 1;
  if (x === Infinity) return 0;
  return x < a + 1 ? 1 - gammaSeries(a, x) : gammaContinuedFraction(a, x);
}

/** P(a, x) = e^-x x^a / Γ(a+1) * sum_n x^n / ((a+1)...(a+n)). */
function gammaSeries(a: number, x: number): number {
  let ap = a;
  let del = 1 / a;
  let sum = del;
  for (let n = 0; n < MAX_ITER; n++) {
    ap += 1;
    del *= x / ap;
    sum += del;
    if (Math.abs(del) < Math.abs(sum) * EPS) break;
  }
  return sum * Math.exp(-x + a * Math.log(x) - logGamma(a));
}

/** Q(a, x) by the continued fraction 1/(x+1-a- 1·(1-a)/(x+3-a- ...)), modified Lentz. */
function gammaContinuedFraction(a: number, x: number): number {
  let b = x + 1 - a;
  let c = 1 / TINY;
  let d = 1 / b;
  let h = d;
  for (let i = 1; i < MAX_ITER; i++) {
    const an = -i * (i - a);
    b += 2;
    d = an * d + b;
    if (Math.abs(d) < TINY) d = TINY;
    c = b + an / c;
    if (Math.abs(c) < TINY) c = TINY;
    d = 1 / d;
    const del = d * c;
    h *= del;
    if (Math.abs(del - 1) < EPS) break;
  }
  return Math.exp(-x + a * Math.log(x) - logGamma(a)) * h;
}

/**
 * Chi-square distribution function: F(x; k) = P(k/2, x/2) (Abramowitz & Stegun 26.4.19).
 *
 * @param x the statistic, x >= 0
 * @param df degrees of freedom k > 0
 * @returns P(X <= x)
 */
export function chiSquareCdf(x: number, df: number): number {
  return gammaP(df / 2, x / 2);
}

/**
 * Chi-square upper tail, the p-value of a chi-square statistic: Q(k/2, x/2).
 *
 * @param x the statistic, x >= 0
 * @param df degrees of freedom k > 0
 * @returns P(X >= x)
 */
export function chiSquareSurvival(x: number, df: number): number {
  return gammaQ(df / 2, x / 2);
}

/**
 * Upper critical value of the chi-square distribution: the x with P(X >= x) = alpha,
 * found by bisection on {@link chiSquareSurvival} (monotone), to about 1e-12 relative.
 *
 * @param alpha upper-tail probability, 0 < alpha < 1
 * @param df degrees of freedom k > 0
 * @returns the critical value
 */
export function chiSquareCritical(alpha: number, df: number): number {
  if (!(alpha > 0 && alpha < 1) || !(df > 0)) return NaN;
  let lo = 0;
  let hi = Math.max(1, df);
  while (chiSquareSurvival(hi, df) > alpha) hi *= 2;
  for (let i = 0; i < 200 && hi - lo > 1e-12 * hi; i++) {
    const mid = (lo + hi) / 2;
    if (chiSquareSurvival(mid, df) > alpha) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}

/**
 * Upper tail of the standard normal distribution, 1 - Φ(z), through
 * erfc(x) = Q(1/2, x^2) (Abramowitz & Stegun 6.5.17 with 7.1.2).
 *
 * @param z the standard score
 * @returns P(Z >= z)
 */
export function normalSurvival(z: number): number {
  if (Number.isNaN(z)) return NaN;
  const half = 0.5 * gammaQ(0.5, (z * z) / 2);
  return z >= 0 ? half : 1 - half;
}

/**
 * Regularized incomplete beta I_x(a, b), continued fraction with the symmetry
 * I_x(a, b) = 1 - I_(1-x)(b, a) for fast convergence (Numerical Recipes 6.4).
 *
 * @param x in [0, 1]
 * @param a > 0
 * @param b > 0
 * @returns I_x(a, b)
 */
export function betaRegularized(x: number, a: number, b: number): number {
  if (!(a > 0 && b > 0) || !(x >= 0 && x <= 1)) return NaN;
  if (x === 0) return 0;
  if (x === 1) return 1;
  const lnFront = logGamma(a + b) - logGamma(a) - logGamma(b) + a * Math.log(x) + b * Math.log1p(-x);
  if (x < (a + 1) / (a + b + 2)) return (Math.exp(lnFront) * betaContinuedFraction(x, a, b)) / a;
  return 1 - (Math.exp(lnFront) * betaContinuedFraction(1 - x, b, a)) / b;
}

function betaContinuedFraction(x: number, a: number, b: number): number {
  const qab = a + b;
  const qap = a + 1;
  const qam = a - 1;
  let c = 1;
  let d = 1 - (qab * x) / qap;
  if (Math.abs(d) < TINY) d = TINY;
  d = 1 / d;
  let h = d;
  for (let m = 1; m < MAX_ITER; m++) {
    const m2 = 2 * m;
    let aa = (m * (b - m) * x) / ((qam + m2) * (a + m2));
    d = 1 + aa * d;
    if (Math.abs(d) < TINY) d = TINY;
    c = 1 + aa / c;
    if (Math.abs(c) < TINY) c = TINY;
    d = 1 / d;
    h *= d * c;
    aa = (-(a + m) * (qab + m) * x) / ((a + m2) * (qap + m2));
    d = 1 + aa * d;
    if (Math.abs(d) < TINY) d = TINY;
    c = 1 + aa / c;
    if (Math.abs(c) < TINY) c = TINY;
    d = 1 / d;
    const del = d * c;
    h *= del;
    if (Math.abs(del - 1) < EPS) break;
  }
  return h;
}

/**
 * Binomial upper tail P(X >= k) for X ~ Binomial(n, p):
 * P(X >= k) = I_p(k, n - k + 1) (Abramowitz & Stegun 26.5.24).
 *
 * @param k threshold count
 * @param n trials
 * @param p success probability, 0 <= p <= 1
 * @returns P(X >= k)
 */
export function binomialUpperTail(k: number, n: number, p: number): number {
  if (k <= 0) return 1;
  if (k > n) return 0;
  if (p <= 0) return 0;
  if (p >= 1) return 1;
  return betaRegularized(p, k, n - k + 1);
}

/**
 * Binomial probability P(X = k) for X ~ Binomial(n, p), through logs.
 *
 * @param k count, 0 <= k <= n
 * @param n trials
 * @param p success probability
 * @returns P(X = k)
 */
export function binomialPmf(k: number, n: number, p: number): number {
  if (k < 0 || k > n) return 0;
  if (p <= 0) return k === 0 ? 1 : 0;
  if (p >= 1) return k === n ? 1 : 0;
  return Math.exp(logChoose(n, k) + k * Math.log(p) + (n - k) * Math.log1p(-p));
}
