/**
 * The PNG encoder and the stored zlib stream, checked by decoding with Node's zlib (an independent
 * inflater) and against published checksums.
 */
import { inflateSync, deflateSync } from 'node:zlib';
import { expect, test } from 'vitest';
import { crc32, encodePng, PNG_SIGNATURE } from '../../../core/texture/encode-png.js';
import { adler32, zlibStore } from '../../../core/texture/zlib-store.js';

/** Minimal PNG decoder for the test: chunks, CRCs, IHDR, inflate, undo the five filters (PNG spec §9). */
function decodePng(png: Uint8Array) {
  expect(Array.from(png.subarray(0, 8))).toEqual(Array.from(PNG_SIGNATURE));
  const dv = new DataView(png.buffer, png.byteOffset, png.byteLength);
  let o = 8, width = 0, height = 0, colorType = 0;
  const idat: Uint8Array[] = [];
  const types: string[] = [];
  while (o < png.length) {
    const len = dv.getUint32(o);
    const type = String.fromCharCode(...png.subarray(o + 4, o + 8));
    types.push(type);
    const data = png.subarray(o + 8, o + 8 + len);
    expect(dv.getUint32(o + 8 + len), `CRC of ${type}`).toBe(crc32(png.subarray(o + 4, o + 8 + len)));
    if (type === 'IHDR') {
      width = dv.getUint32(o + 8);
      height = dv.getUint32(o + 12);
      colorType = data[9];
      expect(data[8]).toBe(8);
    }
    if (type === 'IDAT') idat.push(data);
    o += 12 + len;
  }
  const bpp = colorType === 6 ? 4 : 3;
  const raw = inflateSync(Buffer.concat(idat));
  const stride = width * bpp;
  const px = new Uint8Array(stride * height);
  for (let y = 0; y < height; y++) {
    const f = raw[y * (stride + 1)];
    for (let i = 0; i < stride; i++) {
      const x = raw[y * (stride + 1) + 1 + i];
      const a = i >= bpp ? px[y * stride + i - bpp] : 0;
      const b = y > 0 ? px[(y - 1) * stride + i] : 0;
      const c = i >= bpp && y > 0 ? px[(y - 1) * stride + i - bpp] : 0;
      const p = a + b - c;
      const pred = f === 0 ? 0 : f === 1 ? a : f === 2 ? b : f === 3 ? (a + b) >> 1 : Math.abs(p - a) <= Math.abs(p - b) && Math.abs(p - a) <= Math.abs(p - c) ? a : Math.abs(p - b) <= Math.abs(p - c) ? b : c;
      px[y * stride + i] = (x + pred) & 0xff;
    }
  }
  return { width, height, bpp, px, types };
}

/** A test image with gradients, edges and noise, so every filter type gets picked somewhere. */
function image(w: number, h: number, ch: number) {
  const px = new Uint8Array(w * h * ch);
  let s = 12345;
  for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) for (let k = 0; k < ch; k++) {
    s = (s * 1103515245 + 12345) >>> 0;
    px[(y * w + x) * ch + k] = k === 0 ? x * 4 : k === 1 ? (x > w / 2 ? 255 : y * 3) : k === 2 ? (s >>> 24) : 255;
  }
  return px;
}

test('CRC-32 and Adler-32 give their published values', () => {
  // PNG spec: every IEND chunk ends with the CRC AE 42 60 82 (over the bytes 'IEND').
  expect(crc32(new TextEncoder().encode('IEND'))).toBe(0xae426082);
  // RFC 1950 §9 / common check value: Adler-32 of "Wikipedia" is 0x11E60398 (from memory; Node's zlib agrees below).
  expect(adler32(new TextEncoder().encode('Wikipedia'))).toBe(0x11e60398);
});

test('a stored zlib stream inflates back, across several 64 KiB blocks and for empty input', () => {
  const data = image(300, 300, 3); // 270 000 bytes: 5 blocks
  const z = zlibStore(data);
  expect(Buffer.from(inflateSync(z)).equals(Buffer.from(data))).toBe(true);
  // Node's own zlib stream ends with the same Adler-32.
  const ref = deflateSync(data);
  expect(Buffer.from(z.subarray(z.length - 4)).equals(ref.subarray(ref.length - 4))).toBe(true);
  expect(inflateSync(zlibStore(new Uint8Array(0))).length).toBe(0);
});

test('RGB and RGBA images round-trip, with and without a compressor; compression shrinks them', async () => {
  for (const ch of [3, 4] as const) {
    const px = image(67, 33, ch);
    const stored = await encodePng(px, 67, 33, ch);
    const packed = await encodePng(px, 67, 33, ch, { deflate: (b) => deflateSync(b) });
    for (const png of [stored, packed]) {
      const d = decodePng(png);
      expect([d.width, d.height, d.bpp]).toEqual([67, 33, ch]);
      expect(d.types).toEqual(['IHDR', 'IDAT', 'IEND']);
      expect(Buffer.from(d.px).equals(Buffer.from(px))).toBe(true);
    }
    expect(packed.length).toBeLessThan(stored.length);
  }
});

test('misuse throws with the function name', async () => {
  await expect(encodePng(new Uint8Array(5), 2, 2, 3)).rejects.toThrow(/encodePng: expected 12 bytes/);
  await expect(encodePng(new Uint8Array(8), 2, 2, 2 as never)).rejects.toThrow(/encodePng: channels/);
});
