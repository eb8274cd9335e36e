/**
 * UUIDv7 (RFC 9562): 48 bits of Unix milliseconds, then a counter and random bits.
 * Return ids are made in the server (not by the database) because the intake streams a
 * return's line items into COPY before any row comes back; time-ordered ids keep one
 * batch's line items together at the right edge of line_item's primary-key index, which
 * is far cheaper to grow than random v4 ids spread over the whole index.
 */
import { randomBytes } from 'node:crypto';

const HEX: string[] = Array.from({ length: 256 }, (_, i) => i.toString(16).padStart(2, '0'));

/**
 * Returns a generator of monotonic UUIDv7 strings: within one millisecond a 12-bit counter
 * (RFC 9562 method 1) keeps them increasing; when it runs out the timestamp moves on by one.
 */
export function uuid7Factory(now: () => number = Date.now): () => string {
  let lastMs = 0;
  let counter = 0;
  let pool = randomBytes(4096);
  let at = 0;
  return () => {
    let ms = now();
    if (ms <= lastMs) {
      ms = lastMs;
      counter++;
      if (counter > 0xfff) {
        ms = lastMs + 1;
        counter = 0;
      }
    } else {
      counter = 0;
    }
    lastMs = ms;
    if (at + 8 > pool.length) {
      pool = randomBytes(4096);
      at = 0;
    }
    const b = new Uint8Array(16);
    // 48-bit big-endian milliseconds (split: bit operations in JS are 32-bit).
    const hi = Math.floor(ms / 0x1000000);
    const lo = ms % 0x1000000;
    b[0] = (hi >>> 16) & 0xff;
    b[1] = (hi >>> 8) & 0xff;
    b[2] = hi & 0xff;
    b[3] = (lo >>> 16) & 0xff;
    b[4] = (lo >>> 8) & 0xff;
    b[5] = lo & 0xff;
    b[6] = 0x70 | ((counter >>> 8) & 0x0f);
    b[7] = counter & 0xff;
    b[8] = 0x80 | (pool[at] & 0x3f);
    for (let i = 9; i < 16; i++) b[i] = pool[at + i - 8];
    at += 8;
    let s = '';
    for (let i = 0; i < 16; i++) {
      s += HEX[b[i]];
      if (i === 3 || i === 5 || i === 7 || i === 9) s += '-';
    }
    return s;
  };
}
