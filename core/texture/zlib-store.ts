/**
 * A zlib stream (RFC 1950) holding the data in stored, uncompressed deflate blocks (RFC 1951 §3.2.4:
 * BTYPE 00, then LEN and its one's complement NLEN, little-endian, then up to 65 535 raw bytes),
 * followed by the Adler-32 checksum of the data (RFC 1950 §8.2, big-endian). Any inflater reads it.
 * It is what `encode-png.ts` uses when the host gives no compressor: core has no deflate of its
 * own, and a stored stream costs 5 bytes per 64 KiB over the raw data.
 */

/** Largest stored block (LEN is 16 bits). */
const BLOCK = 65535;

/**
 * Wraps `data` in a zlib stream of stored blocks (see the file comment).
 * @example
 * const z = zlibStore(new TextEncoder().encode('hello')); // inflates back to 'hello'
 */
export function zlibStore(data: Uint8Array): Uint8Array {
  const blocks = Math.max(1, Math.ceil(data.length / BLOCK));
  const out = new Uint8Array(2 + data.length + 5 * blocks + 4);
  // CMF 0x78: deflate with a 32 KiB window; FLG 0x01: no dictionary, fastest level, and
  // (CMF·256 + FLG) divisible by 31 as RFC 1950 requires.
  out[0] = 0x78;
  out[1] = 0x01;
  let o = 2;
  for (let b = 0; b < blocks; b++) {
    const start = b * BLOCK;
    const len = Math.min(BLOCK, data.length - start);
    out[o++] = b === blocks - 1 ? 1 : 0; // BFINAL, BTYPE 00
    out[o++] = len & 0xff;
    out[o++] = len >>> 8;
    out[o++] = ~len & 0xff;
    out[o++] = (~len >>> 8) & 0xff;
    out.set(data.subarray(start, start + len), o);
    o += len;
  }
  const a = adler32(data);
  out[o++] = a >>> 24;
  out[o++] = (a >>> 16) & 0xff;
  out[o++] = (a >>> 8) & 0xff;
  out[o++] = a & 0xff;
  return out;
}

/** Adler-32 of `data` (RFC 1950 §8.2), as an unsigned 32-bit number. */
export function adler32(data: Uint8Array): number {
  let a = 1, b = 0;
  // 5552 is the largest run before b can overflow 2^32 (zlib's NMAX).
  for (let i = 0; i < data.length; ) {
    const end = Math.min(data.length, i + 5552);
    for (; i < end; i++) {
      a += data[i];
      b += a;
    }
    a %= 65521;
    b %= 65521;
  }
  return ((b << 16) | a) >>> 0;
}
