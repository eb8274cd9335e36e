/**
 * A small seeded pseudo-random generator (sfc32, seeded through the cyrb128 string hash),
 * so the same seed always gives the same demo batch on every machine and in every test.
 * Not for anything secret.
 */

/** Random draws the demo generator needs. */
export interface Rng {
  /** Uniform in [0, 1). */
  next(): number;
  /** Integer in [lo, hi], both included. */
  int(lo: number, hi: number): number;
  /** True with probability p. */
  chance(p: number): boolean;
  /** One element, uniformly. */
  pick<T>(items: readonly T[]): T;
  /** One key by weight: `weighted({ a: 3, b: 1 })` gives 'a' three times as often. */
  weighted<K extends string>(weights: Readonly<Record<K, number>>): K;
  /** Standard normal (Box–Muller). */
  normal(): number;
  /** exp(N(ln median, sigma²)): a multiplicative (log-normal) draw around a median. */
  logNormal(median: number, sigma: number): number;
  /** A new generator derived from this one and a label, independent of later draws here. */
  fork(label: string): Rng;
}

/** cyrb128: four 32-bit words from a string, to seed sfc32. */
function cyrb128(str: string): [number, number, number, number] {
  let h1 = 1779033703;
  let h2 = 3144134277;
  let h3 = 1013904242;
  let h4 = 2773480762;
  for (let i = 0; i < str.length; i++) {
    const k = str.charCodeAt(i);
    h1 = h2 ^ Math.imul(h1 ^ k, 597399067);
    h2 = h3 ^ Math.imul(h2 ^ k, 2869860233);
    h3 = h4 ^ Math.imul(h3 ^ k, 951274213);
    h4 = h1 ^ Math.imul(h4 ^ k, 2716044179);
  }
  h1 = Math.imul(h3 ^ (h1 >>> 18), 597399067);
  h2 = Math.imul(h4 ^ (h2 >>> 22), 2869860233);
  h3 = Math.imul(h1 ^ (h3 >>> 17), 951274213);
  h4 = Math.imul(h2 ^ (h4 >>> 19), 2716044179);
  h1 ^= h2 ^ h3 ^ h4;
  h2 ^= h1;
  h3 ^= h1;
  h4 ^= h1;
  return [h1 >>> 0, h2 >>> 0, h3 >>> 0, h4 >>> 0];
}

/**
 * Creates a generator from a seed (number or text).
 * @example const rng = createRng(42); rng.int(1, 6);
 */
export function createRng(seed: number | string): Rng {
  let [a, b, c, d] = cyrb128(String(seed));
  const next = (): number => {
    a >>>= 0;
    b >>>= 0;
    c >>>= 0;
    d >>>= 0;
    let t = (a + b) | 0;
    a = b ^ (b >>> 9);
    b = (c + (c << 3)) | 0;
    c = (c << 21) | (c >>> 11);
    d = (d + 1) | 0;
    t = (t + d) | 0;
    c = (c + t) | 0;
    return (t >>> 0) / 4294967296;
  };
  // Warm up: sfc32's first outputs still echo the seed words.
  for (let i = 0; i < 15; i++) next();
  let spare: number | null = null;
  const rng: Rng = {
    next,
    int: (lo, hi) => lo + Math.floor(next() * (hi - lo + 1)),
    chance: (p) => next() < p,
    pick: (items) => items[Math.floor(next() * items.length)],
    weighted(weights) {
      const keys = Object.keys(weights) as (keyof typeof weights)[];
      let total = 0;
      for (const k of keys) total += weights[k];
      let r = next() * total;
      for (const k of keys) {
        r -= weights[k];
        if (r < 0) return k;
      }
      return keys[keys.length - 1];
    },
    normal() {
      if (spare !== null) {
        const s = spare;
        spare = null;
        return s;
      }
      let u = 0;
      while (u === 0) u = next();
      const v = next();
      const r = Math.sqrt(-2 * Math.log(u));
      spare = r * Math.sin(2 * Math.PI * v);
      return r * Math.cos(2 * Math.PI * v);
    },
    logNormal: (median, sigma) => median * Math.exp(sigma * rng.normal()),
    fork: (label) => createRng(`${a}:${b}:${c}:${d}:${label}`),
  };
  return rng;
}
