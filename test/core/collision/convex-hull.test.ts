/**
 * Quickhull: known hulls (cube, lattice), agreement with manifold-3d's hull (an independent
 * implementation, `Manifold.hull`) on random points, Euler's formula for triangulated convex
 * polytopes (F = 2V − 4), containment and convexity, and the collision hull of a baked prop
 * checked with core/checks.
 */
import Module from 'manifold-3d';
import { beforeAll, describe, expect, test } from 'vitest';
import { convexHull } from '../../../core/collision/convex-hull.js';
import { isConvex } from '../../../core/collision/is-convex.js';
import { runChecks } from '../../../core/checks/run-checks.js';
import { analyzeMesh } from '../../../core/checks/analyze-mesh.js';
import { createRecipeField } from '../../../core/fields/recipe/recipe-field.js';
import { bakeField } from '../../../core/pipeline/bake-field.js';
import type { MeshData } from '../../../core/types.js';
import { expectMesh, rng } from '../../helpers/expect-mesh.js';
import { groovedColumnRecipe } from '../texture/grooved-recipe.js';

type ManifoldWasm = Awaited<ReturnType<typeof Module>>;
let wasm: ManifoldWasm;
beforeAll(async () => {
  wasm = await Module();
  wasm.setup();
});

/** Largest height of any of `points` above any hull face's plane, metres (≤ 0: all inside). */
function maxOutside(hull: MeshData, points: Float32Array): number {
  const P = hull.positions, I = hull.indices;
  let worst = -Infinity;
  for (let t = 0; t < I.length; t += 3) {
    const a = I[t], b = I[t + 1], c = I[t + 2];
    const u = [0, 1, 2].map((k) => P[3 * b + k] - P[3 * a + k]), v = [0, 1, 2].map((k) => P[3 * c + k] - P[3 * a + k]);
    const n = [u[1] * v[2] - u[2] * v[1], u[2] * v[0] - u[0] * v[2], u[0] * v[1] - u[1] * v[0]];
    const len = Math.hypot(n[0], n[1], n[2]);
    const d = (n[0] * P[3 * a] + n[1] * P[3 * a + 1] + n[2] * P[3 * a + 2]) / len;
    for (let i = 0; i < points.length; i += 3) worst = Math.max(worst, (n[0] * points[i] + n[1] * points[i + 1] + n[2] * points[i + 2]) / len - d);
  }
  return worst;
}

describe('known hulls', () => {
  test('the 8 corners of a unit cube among 300 interior points: 8 vertices, 12 triangles, volume exactly 1', () => {
    const r = rng(1);
    const corners = [0, 1].flatMap((x) => [0, 1].flatMap((y) => [0, 1].flatMap((z) => [x, y, z])));
    const pts = Float32Array.from([...corners, ...Array.from({ length: 900 }, () => 0.01 + 0.98 * r())]);
    const h = convexHull(pts)!;
    const m = expectMesh(h.mesh, { components: 1, genus: 0 });
    expect([m.vertices, m.triangles]).toEqual([8, 12]);
    expect(m.volume).toBeCloseTo(1, 12);
    expect(new Set(h.inputIndex).size).toBe(8);
    for (const i of h.inputIndex) expect(i).toBeLessThan(8);
  });

  test('a 10×10×10 lattice (every face crowded with coplanar and collinear points) gives the box: 8 vertices, 12 triangles', () => {
    const pts: number[] = [];
    for (let x = 0; x < 10; x++) for (let y = 0; y < 10; y++) for (let z = 0; z < 10; z++) pts.push(x * 0.1, y * 0.1, z * 0.1);
    const h = convexHull(Float32Array.from(pts))!;
    const m = expectMesh(h.mesh, { components: 1, genus: 0 });
    expect([m.vertices, m.triangles]).toEqual([8, 12]);
    // Side 0.9 in float32 steps of 0.1: volume 0.729 up to float32 rounding.
    expect(m.volume).toBeCloseTo(0.729, 6);
  });

  test('points on a sphere (general position): every point is a vertex and F = 2V − 4 (Euler, triangulated convex polytope)', () => {
    const r = rng(2);
    const pts: number[] = [];
    for (let i = 0; i < 500; i++) {
      const v = [r() * 2 - 1, r() * 2 - 1, r() * 2 - 1];
      const len = Math.hypot(v[0], v[1], v[2]);
      pts.push(...v.map((x) => (0.5 * x) / len));
    }
    const h = convexHull(Float32Array.from(pts))!;
    const m = expectMesh(h.mesh, { components: 1, genus: 0 });
    expect(m.vertices).toBe(500);
    expect(m.triangles).toBe(2 * 500 - 4);
  });
});

describe('against manifold-3d', () => {
  test('random clouds: same volume (to 1e-12 relative) and the same number of vertices as Manifold.hull', () => {
    const r = rng(3);
    for (const n of [10, 100, 2000]) {
      const pts = Float32Array.from({ length: 3 * n }, () => r() * 2 - 1);
      const h = convexHull(pts)!;
      const ours = analyzeMesh(h.mesh);
      const points: [number, number, number][] = [];
      for (let i = 0; i < n; i++) points.push([pts[3 * i], pts[3 * i + 1], pts[3 * i + 2]]);
      const ref = wasm.Manifold.hull(points);
      try {
        expect(Math.abs(ours.volume - ref.volume()) / ref.volume(), `n = ${n}`).toBeLessThan(1e-12);
        expect(ours.vertices, `n = ${n}`).toBe(ref.numVert());
      } finally {
        ref.delete();
      }
    }
  });
});

describe('containment and convexity', () => {
  test('every input point lies inside or within the tolerance; the hull is convex (exactly, up to float64 rounding of the test)', () => {
    const r = rng(4);
    // A noisy flat-topped cylinder: a cap whose points differ from a plane by float32 rounding.
    const pts: number[] = [];
    for (let i = 0; i < 3000; i++) {
      const a = r() * 2 * Math.PI, rad = Math.sqrt(r()) * 0.1;
      pts.push(rad * Math.cos(a), i % 3 === 0 ? 0.5 : r() * 0.5, rad * Math.sin(a));
    }
    const p = Float32Array.from(pts);
    const h = convexHull(p)!;
    expect(h.tolerance).toBe(1e-7);
    expect(maxOutside(h.mesh, p)).toBeLessThanOrEqual(1e-7 + 1e-12);
    const c = isConvex(h.mesh, 1e-12);
    expect(c.ok, JSON.stringify(c)).toBe(true);
    expectMesh(h.mesh, { components: 1, genus: 0 });
  });

  test('the collision hull of a baked prop contains every vertex within 1e-6 m and passes every core check', async () => {
    const field = createRecipeField(groovedColumnRecipe(), 'grooved-column.recipe.json');
    const r = await bakeField(field, { depth: 7, budget: 2000, collision: true, skipExport: true });
    const hull = r.collision!;
    expect(r.report.collision).toEqual({ node: 'fieldkiln-mesh_collision', triangles: hull.indices.length / 3, vertices: hull.positions.length / 3 });
    // The promise: the hull contains every vertex of the mesh within 1e-6 m.
    expect(maxOutside(hull, r.mesh.positions)).toBeLessThanOrEqual(1e-6);
    for (const check of runChecks(hull)) expect(check.ok, `${check.name}: ${JSON.stringify(check.where)}`).toBe(true);
    expect(isConvex(hull).ok).toBe(true);
    expectMesh(hull, { components: 1, genus: 0 });
    // A hull of a 20 cm × 50 cm column: its volume is at least the prop's and below the bounding cylinder's (π·0.1²·0.5).
    const vol = analyzeMesh(hull).volume;
    expect(vol).toBeGreaterThanOrEqual(r.report.mesh.volume);
    expect(vol).toBeLessThan(Math.PI * 0.01 * 0.5);
  });
});

describe('degenerate and bad input', () => {
  test('fewer than 4 points, or all on one plane or line: null (no volume)', () => {
    expect(convexHull(new Float32Array(9))).toBeNull();
    const flat = Float32Array.from({ length: 300 }, (_, i) => (i % 3 === 1 ? 0.25 : (i * 0.37) % 1));
    expect(convexHull(flat)).toBeNull();
    const line = Float32Array.from({ length: 30 }, (_, i) => Math.floor(i / 3) * 0.1);
    expect(convexHull(line)).toBeNull();
  });

  test('non-finite coordinates and ragged arrays are misuse', () => {
    expect(() => convexHull(new Float32Array([0, 0, 0, 1, 0, 0, 0, 1, 0, 0, 0, NaN]))).toThrow(/convexHull: point 3 is not finite/);
    expect(() => convexHull(new Float32Array(10))).toThrow(/convexHull: positions/);
  });
});
