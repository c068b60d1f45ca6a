/** Texture stretch (Sander, Snyder, Gortler and Hoppe 2001, §3) on layouts whose answer is known by hand. */
import { expect, test } from 'vitest';
import { measureUvStretch } from '../../../core/texture/measure-uv-stretch.js';

test('a scaled copy of the triangle has no stretch: L2 = L∞ = 1 after normalization', () => {
  // 3D right triangle with legs 2 and 2, mapped to UV legs 0.5 and 0.5 (a uniform scale of 1/4).
  const p = new Float32Array([0, 0, 0, 2, 0, 0, 0, 2, 0]);
  const uv = new Float32Array([0, 0, 0.5, 0, 0, 0.5]);
  const s = measureUvStretch(p, uv, new Uint32Array([0, 1, 2]));
  expect(s.l2).toBeCloseTo(1, 12);
  expect(s.max).toBeCloseTo(1, 12);
});

test('stretched 2× along one axis: L2 = √(2.5·0.5), L∞ = 2·√0.5', () => {
  // P(s, t) = (2s, t, 0): S_s = (2,0,0), S_t = (0,1,0), so a = 4, b = 0, c = 1 (Sander et al. eq. for Γ, γ):
  // L2 = √((a + c) / 2) = √2.5, Γ = 2. Areas: 3D 1, UV 0.5, so both scale by √(0.5 / 1).
  const p = new Float32Array([0, 0, 0, 2, 0, 0, 0, 1, 0]);
  const uv = new Float32Array([0, 0, 1, 0, 0, 1]);
  const s = measureUvStretch(p, uv, new Uint32Array([0, 1, 2]));
  expect(s.l2).toBeCloseTo(Math.sqrt(2.5 * 0.5), 12);
  expect(s.max).toBeCloseTo(2 * Math.sqrt(0.5), 12);
});

test('a triangle with zero UV area is counted and skipped; mismatched arrays are misuse', () => {
  const p = new Float32Array([0, 0, 0, 1, 0, 0, 0, 1, 0]);
  const s = measureUvStretch(p, new Float32Array([0, 0, 1, 1, 0.5, 0.5]), new Uint32Array([0, 1, 2]));
  expect(s.zeroUvArea).toBe(1);
  expect(() => measureUvStretch(p, new Float32Array(4), new Uint32Array([0, 1, 2]))).toThrow(/measureUvStretch: uvs/);
});
