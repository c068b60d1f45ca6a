/** Rasterizing UV triangles at texel centres, with the one-texel border bilinear filtering reads. */
import { expect, test } from 'vitest';
import { rasterizeAtlas, TEXEL_BORDER, TEXEL_COVERED, TEXEL_EMPTY } from '../../../core/texture/rasterize-atlas.js';

/**
 * One triangle, the lower-left half of an 8×8 atlas (row 0 at v = 0):
 *
 *   row 0  X X X X X X X X     texel (i, j) has its centre at ((i + ½)/8, (j + ½)/8); it is inside
 *   row 1  X X X X X X X b     u + v ≤ 1 when i + j ≤ 7: 8 + 7 + … + 1 = 36 texels.
 *   ...                        Border (b): i + j = 8, centres 1/√2 texel from the hypotenuse, 7 texels;
 *   row 7  X b . . . . . .     i + j = 9 lies √2 away, outside the reach of bilinear filtering.
 */
test('lower-left half of 8×8: 36 covered texels, 7 border texels, barycentrics equal to the UV', () => {
  const r = rasterizeAtlas(new Float32Array([0, 0, 1, 0, 0, 1]), new Uint32Array([0, 1, 2]), 8);
  expect(r.covered).toBe(36);
  expect(r.border).toBe(7);
  for (let j = 0; j < 8; j++) {
    for (let i = 0; i < 8; i++) {
      const texel = j * 8 + i;
      const want = i + j <= 7 ? TEXEL_COVERED : i + j === 8 ? TEXEL_BORDER : TEXEL_EMPTY;
      expect(r.kind[texel], `${i},${j}`).toBe(want);
      if (want === TEXEL_COVERED) {
        // For this triangle, vertex 1 is (1, 0) and vertex 2 is (0, 1): b1 = u, b2 = v.
        expect(r.bary[2 * texel]).toBeCloseTo((i + 0.5) / 8, 6);
        expect(r.bary[2 * texel + 1]).toBeCloseTo((j + 0.5) / 8, 6);
      }
      if (want === TEXEL_BORDER) {
        // The nearest point on the hypotenuse: barycentrics on it sum to 1 and stay within the triangle.
        const b1 = r.bary[2 * texel], b2 = r.bary[2 * texel + 1];
        expect(b1 + b2).toBeCloseTo(1, 6);
        expect(b1).toBeGreaterThanOrEqual(0);
        expect(b2).toBeGreaterThanOrEqual(0);
      }
    }
  }
});

test('two triangles sharing an edge cover the square once, with no border texels inside', () => {
  const uvs = new Float32Array([0, 0, 1, 0, 1, 1, 0, 1]);
  const r = rasterizeAtlas(uvs, new Uint32Array([0, 1, 2, 0, 2, 3]), 16);
  expect(r.covered).toBe(256);
  expect(r.border).toBe(0);
});

test('misuse: size must be a positive whole number', () => {
  expect(() => rasterizeAtlas(new Float32Array(6), new Uint32Array([0, 1, 2]), 0)).toThrow(/rasterizeAtlas: size/);
});
