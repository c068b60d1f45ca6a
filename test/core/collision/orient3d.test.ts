/** The exact orientation predicate, against exact rational arithmetic on near-coplanar float32 points. */
import { expect, test } from 'vitest';
import { orient3d } from '../../../core/collision/orient3d.js';
import { rng } from '../../helpers/expect-mesh.js';

/** Exact sign of (d − a)·((b − a) × (c − a)) for float32 values: every float32 is k·2⁻¹⁴⁹ for an integer k. */
function exactSign(p: Float32Array): number {
  const q = Array.from(p, (x) => BigInt(x * 2 ** 149));
  const [ax, ay, az, bx, by, bz, cx, cy, cz, dx, dy, dz] = q;
  const u = [bx - ax, by - ay, bz - az], v = [cx - ax, cy - ay, cz - az], w = [dx - ax, dy - ay, dz - az];
  const det = w[0] * (u[1] * v[2] - u[2] * v[1]) + w[1] * (u[2] * v[0] - u[0] * v[2]) + w[2] * (u[0] * v[1] - u[1] * v[0]);
  return det > 0n ? 1 : det < 0n ? -1 : 0;
}

test('the unit tetrahedron: d above, below and on the plane of abc', () => {
  expect(orient3d(Float32Array.of(0, 0, 0, 1, 0, 0, 0, 1, 0, 0, 0, 1), 0, 1, 2, 3)).toBe(1);
  expect(orient3d(Float32Array.of(0, 0, 0, 1, 0, 0, 0, 1, 0, 0, 0, -1), 0, 1, 2, 3)).toBe(-1);
  expect(orient3d(Float32Array.of(0, 0, 0, 1, 0, 0, 0, 1, 0, 0.3, 0.3, 0), 0, 1, 2, 3)).toBe(0);
});

test('10 000 near-coplanar float32 quadruples (d on the plane, rounded to float32): the sign is always the exact one', () => {
  const r = rng(9);
  let nearZero = 0;
  for (let i = 0; i < 10_000; i++) {
    // a, b, c far from the origin; d = a + s(b − a) + t(c − a) rounded to float32: off the plane by rounding only.
    const base = [100 + r(), 200 + r(), 300 + r()];
    const a = base, b = base.map((x) => x + r()), c = base.map((x) => x + r());
    const s = r(), t = r();
    const d = [0, 1, 2].map((k) => a[k] + s * (b[k] - a[k]) + t * (c[k] - a[k]));
    const p = Float32Array.from([...a, ...b, ...c, ...d]);
    const want = exactSign(p);
    if (want === 0) nearZero++;
    expect(orient3d(p, 0, 1, 2, 3), `case ${i}`).toBe(want);
  }
  expect(nearZero).toBeLessThan(10_000);
});

test('exactly coplanar points (d = b + c − a on a fine lattice) give 0, through the exact path', () => {
  const r = rng(10);
  for (let i = 0; i < 1000; i++) {
    // Coordinates k·2⁻²⁰ with |k| < 2²⁰: exact in float32, and so is b + c − a.
    const q = () => Math.round((r() - 0.5) * 2 ** 20) / 2 ** 20;
    const a = [q(), q(), q()], b = [q(), q(), q()], c = [q(), q(), q()];
    const d = [0, 1, 2].map((k) => b[k] + c[k] - a[k]);
    const p = Float32Array.from([...a, ...b, ...c, ...d]);
    expect(Array.from(p.subarray(9))).toEqual(d);
    expect(orient3d(p, 0, 1, 2, 3)).toBe(0);
  }
});
