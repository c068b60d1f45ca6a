/** Field normals at arbitrary points by central differences, against the sphere's exact normal p/|p|. */
import { expect, test } from 'vitest';
import { estimateFieldNormals } from '../../../core/texture/estimate-field-normals.js';
import { fnField, sphereSdf } from '../../helpers/analytic-fields.js';

const pts = new Float32Array([0.5, 0, 0, 0, -0.5, 0, 0.3, 0.3, Math.sqrt(0.5 * 0.5 - 0.18)]);
const up = new Float32Array([0, 1, 0, 0, 1, 0, 0, 1, 0]);

test('sdf sphere: outward unit normals p/|p| (central differences of |p| are off by O(h²))', async () => {
  // Fallbacks within 90° of the true normals but not equal to them, so using one would show.
  const rough = pts.map((x, i) => x * 2 + (i % 3 === 0 ? 0.3 : 0));
  const r = await estimateFieldNormals(fnField(sphereSdf(0.5), [-1, -1, -1, 1, 1, 1]), pts, rough, { level: 0, step: 1e-3 });
  expect(r.fallbacks).toBe(0);
  for (let i = 0; i < 3; i++) {
    const p = pts.subarray(3 * i, 3 * i + 3);
    const len = Math.hypot(p[0], p[1], p[2]);
    for (let k = 0; k < 3; k++) expect(r.normals[3 * i + k]).toBeCloseTo(p[k] / len, 5);
  }
  expect(r.evaluations).toBe(18);
});

test('density grows inward, so its normal is −∇: still outward', async () => {
  const field = fnField((x, y, z) => 1 - Math.hypot(x, y, z), [-1, -1, -1, 1, 1, 1], { kind: 'density', level: 0.5 });
  const r = await estimateFieldNormals(field, new Float32Array([0, 0.5, 0]), new Float32Array([0, 1, 0]), { level: 0.5, step: 1e-3 });
  expect(r.normals[1]).toBeCloseTo(1, 6);
  expect(r.fallbacks).toBe(0);
});

test('a constant field has no gradient: the fallback direction is returned and counted', async () => {
  const r = await estimateFieldNormals(fnField(() => 1, [-1, -1, -1, 1, 1, 1]), pts, up, { level: 0, step: 1e-3 });
  expect(r.fallbacks).toBe(3);
  expect(Array.from(r.normals)).toEqual(Array.from(up));
});

test('misuse throws with the function name', async () => {
  await expect(estimateFieldNormals(fnField(() => 1, [-1, -1, -1, 1, 1, 1]), pts, up, { level: 0, step: 0 })).rejects.toThrow(/estimateFieldNormals: step/);
});
