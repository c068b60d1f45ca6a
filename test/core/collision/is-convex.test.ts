/** The convexity predicate on a cube, a dented cube and an inside-out cube. */
import { expect, test } from 'vitest';
import { isConvex } from '../../../core/collision/is-convex.js';
import type { MeshData } from '../../../core/types.js';

/**
 * Unit cube, 8 corners indexed by bits (x, y, z) = (i & 1, i >> 1 & 1, i >> 2 & 1), 12 triangles
 * wound counter-clockwise seen from outside.
 */
function cube(): MeshData {
  const positions = new Float32Array(24);
  for (let i = 0; i < 8; i++) positions.set([i & 1, (i >> 1) & 1, (i >> 2) & 1], 3 * i);
  // prettier-ignore
  const indices = new Uint32Array([
    0, 2, 1, 1, 2, 3, // z = 0, facing −z
    4, 5, 6, 5, 7, 6, // z = 1
    0, 1, 4, 1, 5, 4, // y = 0
    2, 6, 3, 3, 6, 7, // y = 1
    0, 4, 2, 2, 4, 6, // x = 0
    1, 3, 5, 3, 7, 5, // x = 1
  ]);
  return { positions, indices };
}

test('a cube is convex: every corner on or below every face plane', () => {
  const r = isConvex(cube());
  expect(r.ok).toBe(true);
  expect(r.maxExcess).toBeCloseTo(0, 12);
});

test('a cube with corner 7 pushed inward to (0.6, 0.6, 0.6) is not convex, and the check says where', () => {
  const m = cube();
  m.positions.set([0.6, 0.6, 0.6], 21);
  const r = isConvex(m);
  expect(r.ok).toBe(false);
  expect(r.maxExcess).toBeGreaterThan(0.1);
  expect(r.where.length).toBeGreaterThan(0);
});

test('an inside-out cube is not convex in our sense (its corners lie above its reversed faces)', () => {
  const m = cube();
  for (let t = 0; t < m.indices.length; t += 3) [m.indices[t + 1], m.indices[t + 2]] = [m.indices[t + 2], m.indices[t + 1]];
  expect(isConvex(m).ok).toBe(false);
});
