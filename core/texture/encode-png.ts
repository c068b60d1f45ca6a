/**
 * A PNG encoder for 8-bit RGB or RGBA images (W3C, "Portable Network Graphics (PNG) Specification
 * (Second Edition)", 2003, = ISO/IEC 15948): signature, IHDR, one IDAT, IEND; each chunk's CRC-32
 * over its type and data (§5.5, the polynomial of ISO 3309). No colour-space chunks: glTF says
 * readers ignore them and fixes the meaning per use (base colour sRGB, normals linear).
 *
 * Compression: the host passes `deflate`, a function that returns a zlib stream (RFC 1950) of its
 * input; Node's `zlib.deflateSync` is one, a browser's `CompressionStream('deflate')` another.
 * Core has no compressor of its own (it stays free of platform modules, and a deflate
 * implementation is not worth carrying beside the host's), so without one the data goes out in
 * stored blocks (`zlib-store.ts`): a valid PNG, as large as the raw pixels. With a compressor,
 * each row gets the filter the spec suggests choosing by (§12.8: the one whose output has the
 * smallest sum of absolute values, bytes read as signed); without one, filter 0, since stored
 * blocks gain nothing from filtering.
 */
import { zlibStore } from './zlib-store.js';

const NAME = 'encodePng';

/** Returns a zlib stream (RFC 1950) of `bytes`, e.g. Node's `zlib.deflateSync`. */
export type DeflateFn = (bytes: Uint8Array) => Uint8Array | Promise<Uint8Array>;

/** Options for {@link encodePng}. */
export interface EncodePngOptions {
  /** Compressor; default: stored blocks (no compression). */
  deflate?: DeflateFn;
}

/**
 * PNG bytes of an 8-bit image (see the file comment).
 * @param pixels `channels` bytes per pixel, row-major from the top row.
 * @param channels 3 (RGB) or 4 (RGBA).
 * @example
 * const png = await encodePng(rgb, 512, 512, 3, { deflate: (b) => zlib.deflateSync(b) });
 */
export async function encodePng(pixels: Uint8Array, width: number, height: number, channels: 3 | 4, options: EncodePngOptions = {}): Promise<Uint8Array> {
  if (!Number.isInteger(width) || !Number.isInteger(height) || width < 1 || height < 1) throw new Error(`${NAME}: width and height must be positive whole numbers`);
  if (channels !== 3 && channels !== 4) throw new Error(`${NAME}: channels must be 3 or 4 (got ${channels})`);
  if (pixels.length !== width * height * channels) throw new Error(`${NAME}: expected ${width * height * channels} bytes, got ${pixels.length}`);
  const stride = width * channels;
  const raw = new Uint8Array((stride + 1) * height);
  if (options.deflate) filterRows(pixels, raw, stride, height, channels);
  else for (let y = 0; y < height; y++) raw.set(pixels.subarray(y * stride, (y + 1) * stride), y * (stride + 1) + 1);
  const idat = options.deflate ? await options.deflate(raw) : zlibStore(raw);

  const ihdr = new Uint8Array(13);
  const dv = new DataView(ihdr.buffer);
  dv.setUint32(0, width);
  dv.setUint32(4, height);
  ihdr[8] = 8; // bit depth
  ihdr[9] = channels === 4 ? 6 : 2; // colour type: truecolour (with alpha)
  ihdr[10] = 0; // compression: deflate
  ihdr[11] = 0; // filter method 0
  ihdr[12] = 0; // no interlace
  const parts = [PNG_SIGNATURE, chunk('IHDR', ihdr), chunk('IDAT', idat), chunk('IEND', new Uint8Array(0))];
  const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
  let o = 0;
  for (const p of parts) {
    out.set(p, o);
    o += p.length;
  }
  return out;
}

/** The 8-byte PNG signature (§5.2). */
export const PNG_SIGNATURE = new Uint8Array([137, 80, 78, 71, 13, 10, 26, 10]);

/** Rows with their filter byte, each filtered by the type whose output has the smallest sum of |signed bytes| (§12.8). */
function filterRows(pixels: Uint8Array, raw: Uint8Array, stride: number, height: number, bpp: number): void {
  const candidates = Array.from({ length: 5 }, () => new Uint8Array(stride));
  const zero = new Uint8Array(stride);
  for (let y = 0; y < height; y++) {
    const row = pixels.subarray(y * stride, (y + 1) * stride);
    const up = y > 0 ? pixels.subarray((y - 1) * stride, y * stride) : zero;
    let best = 0;
    let bestSum = Infinity;
    for (let type = 0; type < 5; type++) {
      const c = candidates[type];
      let sum = 0;
      for (let i = 0; i < stride; i++) {
        const a = i >= bpp ? row[i - bpp] : 0;
        const b = up[i];
        const cc = i >= bpp ? up[i - bpp] : 0;
        let pred = 0;
        if (type === 1) pred = a;
        else if (type === 2) pred = b;
        else if (type === 3) pred = (a + b) >> 1;
        else if (type === 4) pred = paeth(a, b, cc);
        const v = (row[i] - pred) & 0xff;
        c[i] = v;
        sum += v < 128 ? v : 256 - v;
      }
      if (sum < bestSum) {
        bestSum = sum;
        best = type;
      }
    }
    const o = y * (stride + 1);
    raw[o] = best;
    raw.set(candidates[best], o + 1);
  }
}

/** The Paeth predictor (§9.4). */
function paeth(a: number, b: number, c: number): number {
  const p = a + b - c;
  const pa = Math.abs(p - a), pb = Math.abs(p - b), pc = Math.abs(p - c);
  return pa <= pb && pa <= pc ? a : pb <= pc ? b : c;
}

/** length, type, data, CRC-32(type + data) (§5.3). */
function chunk(type: string, data: Uint8Array): Uint8Array {
  const out = new Uint8Array(12 + data.length);
  const dv = new DataView(out.buffer);
  dv.setUint32(0, data.length);
  for (let i = 0; i < 4; i++) out[4 + i] = type.charCodeAt(i);
  out.set(data, 8);
  dv.setUint32(8 + data.length, crc32(out.subarray(4, 8 + data.length)));
  return out;
}

let crcTable: Uint32Array | undefined;

/** CRC-32 as PNG uses it (§5.5, Annex D: reflected polynomial 0xEDB88320, initial and final XOR 0xFFFFFFFF). */
export function crc32(bytes: Uint8Array): number {
  if (!crcTable) {
    crcTable = new Uint32Array(256);
    for (let n = 0; n < 256; n++) {
      let c = n;
      for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
      crcTable[n] = c >>> 0;
    }
  }
  let c = 0xffffffff;
  for (let i = 0; i < bytes.length; i++) c = crcTable[(c ^ bytes[i]) & 0xff] ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}
