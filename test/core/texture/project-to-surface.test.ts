/**
 * Projection onto the field's surface along given directions, against the analytic ray–sphere
 * intersection: |p + t·d| = r has t = −(p·d) ± √((p·d)² − |p|² + r²).
 */
import { expect, test } from 'vitest';
import { projectToSurface } from '../../../core/texture/project-to-surface.js';
import type { Field } from '../../../core/fields/field.js';
import { fnField, sphereSdf } from '../../helpers/analytic-fields.js';

const R = 0.5;

/** Ray–sphere intersection nearest t = 0 (sphere of radius R at the origin). */
function hit(p: number[], d: number[]): number[] {
  const pd = p[0] * d[0] + p[1] * d[1] + p[2] * d[2];
  const disc = Math.sqrt(pd * pd - (p[0] ** 2 + p[1] ** 2 + p[2] ** 2) + R * R);
  const t1 = -pd + disc, t2 = -pd - disc;
  const t = Math.abs(t1) < Math.abs(t2) ? t1 : t2;
  return [p[0] + t * d[0], p[1] + t * d[1], p[2] + t * d[2]];
}

/** Points near the sphere with directions tilted up to 30° from radial; a deterministic spread. */
function cases(n: number) {
  const pts = new Float32Array(3 * n), dirs = new Float32Array(3 * n);
  for (let i = 0; i < n; i++) {
    const th = Math.acos(1 - (2 * (i + 0.5)) / n), ph = i * 2.399963;
    const radial = [Math.sin(th) * Math.cos(ph), Math.cos(th), Math.sin(th) * Math.sin(ph)];
    const r = R + 0.02 * Math.sin(7 * i); // within ±2 cm
    const tilt = [radial[0] + 0.5 * Math.sin(3 * i), radial[1] + 0.5 * Math.cos(5 * i), radial[2]];
    const len = Math.hypot(...tilt);
    pts.set(radial.map((x) => r * x), 3 * i);
    dirs.set(tilt.map((x) => x / len), 3 * i);
  }
  return { pts, dirs };
}

/** Counts calls to evaluate: the batching promise is a handful of calls, not one per point. */
function counting(f: Field) {
  let calls = 0;
  return { field: { ...f, evaluate: (p: Float32Array, s?: AbortSignal) => (calls++, f.evaluate(p, s)) } as Field, calls: () => calls };
}

test('sdf: Newton steps land on the ray–sphere intersection within the tolerance, in a few batched calls', async () => {
  const n = 500;
  const { pts, dirs } = cases(n);
  const c = counting(fnField(sphereSdf(R), [-1, -1, -1, 1, 1, 1]));
  const r = await projectToSurface(c.field, pts, dirs, { level: 0, maxDistance: 0.1, tolerance: 1e-6 });
  let worst = 0;
  for (let i = 0; i < n; i++) {
    expect(r.found[i]).toBe(1);
    const want = hit(Array.from(pts.subarray(3 * i, 3 * i + 3)), Array.from(dirs.subarray(3 * i, 3 * i + 3)));
    worst = Math.max(worst, Math.hypot(r.points[3 * i] - want[0], r.points[3 * i + 1] - want[1], r.points[3 * i + 2] - want[2]));
  }
  // Tolerance 1 µm plus float32 rounding of the result (≈ 0.03 µm at 0.5 m).
  expect(worst).toBeLessThan(2e-6);
  expect(c.calls()).toBeLessThanOrEqual(1 + 6);
});

test('density: the bracketing search and regula falsi land on the same points', async () => {
  const n = 300;
  const { pts, dirs } = cases(n);
  // Density 1 − r/(2R): 0.5 exactly on the sphere, growing inward (inside where above the level).
  const field = fnField((x, y, z) => 1 - Math.hypot(x, y, z) / (2 * R), [-1, -1, -1, 1, 1, 1], { kind: 'density', level: 0.5 });
  const c = counting(field);
  const r = await projectToSurface(c.field, pts, dirs, { level: 0.5, maxDistance: 0.1, tolerance: 1e-6 });
  let worst = 0;
  for (let i = 0; i < n; i++) {
    expect(r.found[i]).toBe(1);
    const want = hit(Array.from(pts.subarray(3 * i, 3 * i + 3)), Array.from(dirs.subarray(3 * i, 3 * i + 3)));
    worst = Math.max(worst, Math.hypot(r.points[3 * i] - want[0], r.points[3 * i + 1] - want[1], r.points[3 * i + 2] - want[2]));
  }
  expect(worst).toBeLessThan(2e-6);
  expect(c.calls()).toBeLessThanOrEqual(1 + 8);
});

test('a surface beyond maxDistance is not found: the point stays where it was and is counted', async () => {
  const pts = new Float32Array([0, 0.7, 0]); // 20 cm outside
  const r = await projectToSurface(fnField(sphereSdf(R), [-1, -1, -1, 1, 1, 1]), pts, new Float32Array([0, 1, 0]), { level: 0, maxDistance: 0.05, tolerance: 1e-6 });
  expect(r.found[0]).toBe(0);
  expect(Array.from(r.points)).toEqual([0, Math.fround(0.7), 0]);
});

test('NaN values are not surfaces: no crash, nothing found', async () => {
  const field = fnField(() => NaN, [-1, -1, -1, 1, 1, 1]);
  const r = await projectToSurface(field, new Float32Array([0, 0.5, 0]), new Float32Array([0, 1, 0]), { level: 0, maxDistance: 0.05, tolerance: 1e-6 });
  expect(r.found[0]).toBe(0);
});

test('misuse throws with the function name', async () => {
  const f = fnField(sphereSdf(R), [-1, -1, -1, 1, 1, 1]);
  await expect(projectToSurface(f, new Float32Array(3), new Float32Array(6), { level: 0, maxDistance: 1, tolerance: 1e-6 })).rejects.toThrow(/projectToSurface: points/);
  await expect(projectToSurface(f, new Float32Array(3), new Float32Array(3), { level: 0, maxDistance: 0, tolerance: 1e-6 })).rejects.toThrow(/projectToSurface: maxDistance/);
});
