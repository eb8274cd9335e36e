/**
 * Sorting non-negative integer keys, for the number-duplication and second-order tests. Why a
 * radix sort: on 10 million keys the native TypedArray sort takes about 1.4 s on the reference
 * machine, an LSD radix sort about 0.4 s, and these two tests are the only part of the profile
 * that is not a single pass. Keys below 2^32 (amounts below about 21 million) are kept in a
 * Uint32Array ({@link IntegerKeyList}): half the memory of doubles, so half the traffic of
 * the scatter passes, and fewer bytes outside the heap that make the garbage collector run.
 */

const RADIX_BITS = 11;
const RADIX = 1 << RADIX_BITS;
const MASK = RADIX - 1;
const PASSES = 5; // 55 bits cover keys below 2^53
const TWO32 = 4294967296;
/** Below this many keys the native sort is faster than five histograms of 2048 bins. */
const NATIVE_BELOW = 4096;

/**
 * Keys gathered a block at a time, in a Uint32Array while every key is below 2^32 and in a
 * Float64Array from the first one that is not (the keys so far are copied over once).
 */
export class IntegerKeyList {
  private keys: Uint32Array | Float64Array;
  private len = 0;
  private max = 0;

  /** @param capacity the most keys that will be appended */
  constructor(capacity: number) {
    this.keys = new Uint32Array(capacity);
  }

  /** Keys appended so far. */
  get length(): number {
    return this.len;
  }

  /**
   * Append keys.
   *
   * @param src the keys, integers 0 <= k < 2^53, in src[0..count)
   * @param count how many
   * @param max the largest of them (or any bound at least as large)
   */
  append(src: Float64Array, count: number, max: number): void {
    if (max > this.max) {
      if (max >= TWO32 && this.keys instanceof Uint32Array) {
        const wider = new Float64Array(this.keys.length);
        wider.set(this.keys.subarray(0, this.len));
        this.keys = wider;
      }
      this.max = max;
    }
    // TypedArray set converts in native code; keys below 2^32 are exact in a Uint32Array.
    this.keys.set(src.subarray(0, count), this.len);
    this.len += count;
  }

  /**
   * The keys in ascending order. Sorts in place: call once, after the last append.
   *
   * @returns a Uint32Array when every key is below 2^32, else a Float64Array
   */
  sorted(): Uint32Array | Float64Array {
    const keys = this.keys.subarray(0, this.len);
    return keys instanceof Uint32Array ? sortIntegerKeys(keys) : sortIntegerKeys(keys, this.max);
  }
}

/**
 * Sort integer keys 0 <= k < 2^53 ascending. Passes whose digit is the same for every key
 * (typically the high ones) are skipped.
 *
 * @param keys the keys; may be reordered or reused as scratch
 * @param knownMax the largest key, when the caller already knows it (saves a pass)
 * @returns the sorted keys: `keys` itself or a new array of the same length and type
 */
export function sortIntegerKeys(keys: Uint32Array): Uint32Array;
export function sortIntegerKeys(keys: Float64Array, knownMax?: number): Float64Array;
export function sortIntegerKeys(keys: Float64Array | Uint32Array, knownMax?: number): Float64Array | Uint32Array {
  const n = keys.length;
  if (n < NATIVE_BELOW) return keys.sort();
  if (keys instanceof Uint32Array) return sortUint32(keys);
  let max = knownMax ?? 0;
  if (knownMax === undefined) for (let i = 0; i < n; i++) if (keys[i] > max) max = keys[i];
  if (max < TWO32) {
    keys.set(sortUint32(new Uint32Array(keys)));
    return keys;
  }
  // One pass for all five histograms. A key's digits: bits 0-10, 11-21, 22-32, 33-43, 44-54;
  // lo = k mod 2^32 (ToUint32 is exact modulo 2^32), hi = floor(k / 2^32).
  const hist = new Int32Array(RADIX * PASSES);
  for (let i = 0; i < n; i++) {
    const k = keys[i];
    const lo = k >>> 0;
    const hi = (k / TWO32) >>> 0;
    hist[lo & MASK]++;
    hist[RADIX + ((lo >>> 11) & MASK)]++;
    hist[2 * RADIX + ((lo >>> 22) | ((hi & 1) << 10))]++;
    hist[3 * RADIX + ((hi >>> 1) & MASK)]++;
    hist[4 * RADIX + ((hi >>> 12) & MASK)]++;
  }
  let src = keys;
  let dst: Float64Array | null = null;
  for (let p = 0; p < PASSES; p++) {
    const off = p * RADIX;
    let used = 0;
    for (let b = 0; b < RADIX && used < 2; b++) if (hist[off + b] !== 0) used++;
    if (used < 2) continue; // every key has the same digit here: nothing to do
    let sum = 0;
    for (let b = 0; b < RADIX; b++) {
      const c = hist[off + b];
      hist[off + b] = sum;
      sum += c;
    }
    if (dst === null) dst = new Float64Array(n);
    scatter(src, dst, hist, off, p);
    const t = src;
    src = dst;
    dst = t;
  }
  return src;
}

/**
 * Keys below 2^32: two passes of 16 bits instead of three of 11; measured 10–25 % faster on
 * 10 million keys despite the larger histograms.
 */
function sortUint32(keys: Uint32Array): Uint32Array {
  const n = keys.length;
  const h0 = new Int32Array(65536);
  const h1 = new Int32Array(65536);
  for (let i = 0; i < n; i++) {
    const k = keys[i];
    h0[k & 0xffff]++;
    h1[k >>> 16]++;
  }
  let s0 = 0;
  let s1 = 0;
  for (let b = 0; b < 65536; b++) {
    const c0 = h0[b];
    h0[b] = s0;
    s0 += c0;
    const c1 = h1[b];
    h1[b] = s1;
    s1 += c1;
  }
  const tmp = new Uint32Array(n);
  for (let i = 0; i < n; i++) {
    const k = keys[i];
    tmp[h0[k & 0xffff]++] = k;
  }
  for (let i = 0; i < n; i++) {
    const k = tmp[i];
    keys[h1[k >>> 16]++] = k;
  }
  return keys;
}

/** One stable counting-sort pass on digit p; a loop per pass keeps the inner loop branch-free. */
function scatter(src: Float64Array, dst: Float64Array, pos: Int32Array, off: number, p: number): void {
  const n = src.length;
  switch (p) {
    case 0:
      for (let i = 0; i < n; i++) {
        const k = src[i];
        dst[pos[off + ((k >>> 0) & MASK)]++] = k;
      }
      return;
    case 1:
      for (let i = 0; i < n; i++) {
        const k = src[i];
        dst[pos[off + (((k >>> 0) >>> 11) & MASK)]++] = k;
      }
      return;
    case 2:
      for (let i = 0; i < n; i++) {
        const k = src[i];
        dst[pos[off + (((k >>> 0) >>> 22) | ((((k / TWO32) >>> 0) & 1) << 10))]++] = k;
      }
      return;
    case 3:
      for (let i = 0; i < n; i++) {
        const k = src[i];
        dst[pos[off + ((((k / TWO32) >>> 0) >>> 1) & MASK)]++] = k;
      }
      return;
    default:
      for (let i = 0; i < n; i++) {
        const k = src[i];
        dst[pos[off + ((((k / TWO32) >>> 0) >>> 12) & MASK)]++] = k;
      }
  }
}
