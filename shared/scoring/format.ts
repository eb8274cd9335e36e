/** Amounts and shares as evidence text shows them. */

/** A whole number with thousands separators: 1234567 → "1,234,567". */
export function thousands(n: number): string {
  return Math.round(n)
    .toString()
    .replace(/\B(?=(\d{3})+(?!\d))/g, ',');
}

/** 1234567 cents → "12,345.67". */
export function money(cents: number): string {
  const neg = cents < 0;
  const a = Math.round(Math.abs(cents));
  const whole = thousands(Math.floor(a / 100));
  const frac = String(a % 100).padStart(2, '0');
  return `${neg ? '−' : ''}${whole}.${frac}`;
}

/** 0.973 → "97 %". */
export function pct(x: number, digits = 0): string {
  return `${(x * 100).toFixed(digits)} %`;
}

/** Clamps to [0, 1]. */
export function clamp01(x: number): number {
  return x < 0 ? 0 : x > 1 ? 1 : Number.isFinite(x) ? x : 0;
}
