import fc from 'fast-check';
import { mulberry32 } from '../../../shared/digits';
import { IntegerKeyList, sortIntegerKeys } from '../../../shared/digits/sort';

/** The reference: the native numeric TypedArray sort. */
function sameAsNative(keys: Float64Array, knownMax?: number): boolean {
  const want = keys.slice().sort();
  const got = sortIntegerKeys(keys.slice(), knownMax);
  return got.length === want.length && got.every((k, i) => k === want[i]);
}

function randomKeys(seed: number, n: number, below: number): Float64Array {
  const rnd = mulberry32(seed);
  // two draws so that keys above 2^32 use all 53 bits
  return Float64Array.from({ length: n }, () => Math.floor((rnd() + rnd() * 2 ** -32) * below));
}

describe('radix sort of integer keys (against the native sort)', () => {
  it.each([
    ['small input, native path', 100, 1e6],
    ['keys below 2^32, two 16-bit passes', 50_000, 2 ** 32],
    ['keys below 2^33, five 11-bit passes (high ones skipped)', 50_000, 2 ** 33],
    ['keys up to 2^53', 50_000, 2 ** 53],
    ['many equal keys', 50_000, 7],
  ])('%s', (_what, n, below) => {
    const keys = randomKeys(n + below, n, below);
    expect(sameAsNative(keys)).toBe(true);
    let max = 0;
    for (const k of keys) max = Math.max(max, k);
    expect(sameAsNative(keys, max)).toBe(true);
  });

  it('any integer keys below 2^53 (fast-check)', () => {
    fc.assert(
      fc.property(fc.array(fc.integer({ min: 0, max: Number.MAX_SAFE_INTEGER }), { minLength: 4096, maxLength: 5000 }), (xs) =>
        sameAsNative(Float64Array.from(xs)),
      ),
      { numRuns: 20 },
    );
  });
});

describe('keys gathered in blocks (IntegerKeyList)', () => {
  it('keep 32-bit keys until a larger one comes, then sort like the native sort', () => {
    const keys = randomKeys(11, 30_000, 2 ** 32);
    keys[25_000] = 2 ** 40 + 3; // the first key of 2^32 or more, in the last block
    const list = new IntegerKeyList(keys.length);
    for (let from = 0; from < keys.length; from += 4096) {
      const block = keys.slice(from, from + 4096);
      list.append(block, block.length, Math.max(...block));
    }
    const got = list.sorted();
    expect(got).toBeInstanceOf(Float64Array);
    expect(Array.from(got)).toEqual(Array.from(keys.slice().sort()));
  });

  it('stay 32-bit when every key fits', () => {
    const keys = randomKeys(12, 20_000, 2 ** 32);
    const list = new IntegerKeyList(keys.length);
    list.append(keys, keys.length, Math.max(...keys));
    const got = list.sorted();
    expect(got).toBeInstanceOf(Uint32Array);
    expect(Array.from(got)).toEqual(Array.from(keys.slice().sort()));
  });
});
