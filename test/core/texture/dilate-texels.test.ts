/** Filling the empty texels outward from the baked ones. */
import { expect, test } from 'vitest';
import { dilateTexels } from '../../../core/texture/dilate-texels.js';

test('one baked texel in a 5×5 image fills every texel with its value', () => {
  const px = new Uint8Array(25 * 3);
  const filled = new Uint8Array(25);
  px.set([10, 200, 30], 12 * 3);
  filled[12] = 1;
  expect(dilateTexels(px, 3, 5, 5, filled)).toBe(24);
  for (let i = 0; i < 25; i++) expect(Array.from(px.subarray(3 * i, 3 * i + 3))).toEqual([10, 200, 30]);
});

/**
 * Two baked texels at the ends of a 7×1 row: A . . . . . B
 * Ring 1 (next to A or B) copies its neighbour; ring 2 likewise; ring 3, the middle texel, averages
 * its two ring-2 neighbours: (A + B) / 2.
 */
test('a gutter between two charts is filled from both sides, meeting in the middle', () => {
  const px = new Uint8Array(7);
  const filled = new Uint8Array(7);
  px[0] = 0;
  px[6] = 200;
  filled[0] = filled[6] = 1;
  dilateTexels(px, 1, 7, 1, filled);
  expect(Array.from(px)).toEqual([0, 0, 0, 100, 200, 200, 200]);
});

test('nothing baked: the image is left alone', () => {
  const px = new Uint8Array(4).fill(7);
  expect(dilateTexels(px, 1, 2, 2, new Uint8Array(4))).toBe(0);
  expect(Array.from(px)).toEqual([7, 7, 7, 7]);
});

test('misuse: sizes must agree', () => {
  expect(() => dilateTexels(new Uint8Array(3), 3, 2, 2, new Uint8Array(4))).toThrow(/dilateTexels: pixels/);
});
