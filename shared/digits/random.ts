/**
 * A small seeded pseudo-random generator, so simulations (the size-aware table, tests,
 * the benchmark) give the same numbers on every machine and every run.
 */

// Math functions bound once: a global `Math` lookup in a hot loop is slow under jest's vm
// sandbox (about 150 ns a call), and the local binding costs nothing under plain node.
const { imul } = Math;

/**
 * Mulberry32 (Tommy Ettinger, public domain; the constants are from memory, and the
 * tests only rely on it being seeded and roughly uniform, which they check).
 *
 * @param seed any 32-bit integer
 * @returns a function giving uniform numbers in [0, 1), 2^32 distinct values
 */
export function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = imul(t ^ (t >>> 15), t | 1);
    t ^= t + imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}
