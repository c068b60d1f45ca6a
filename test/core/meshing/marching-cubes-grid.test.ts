/**
 * The dense-grid driver must give the same mesh as the octree path on the same lattice (same
 * triangulation rules), and skip the blocks that do not straddle the level.
 */
import { describe, expect, test } from 'vitest';
import { marchingCubesGrid } from '../../../core/meshing/marching-cubes-grid.js';
import { marchingCubes } from '../../../core/meshing/marching-cubes.js';
import { sampleDense } from '../../../core/sampling/sample-dense.js';
import { latticeNodePoints, makeLattice } from '../../../core/sampling/lattice.js';
import { analyzeMesh } from '../../../core/checks/analyze-mesh.js';
import { fnField, sphereSdf, torusSdf } from '../../helpers/analytic-fields.js';
import { expectClosedManifold, rng } from '../../helpers/expect-mesh.js';
import type { Bounds } from '../../../core/types.js';

async function both(fn: (x: number, y: number, z: number) => number, bounds: Bounds, depth: number, blockSize = 4) {
  const field = fnField(fn, bounds, { lipschitz: 1e9 });
  const lat = makeLattice(bounds, depth);
  const values = await field.evaluate(latticeNodePoints(lat));
  const [nx, ny, nz] = lat.cells;
  const grid = marchingCubesGrid(values, [nx + 1, ny + 1, nz + 1], { kind: 'sdf', level: 0, origin: lat.origin, spacing: [lat.cellSize, lat.cellSize, lat.cellSize], blockSize });
  const sparse = marchingCubes(await sampleDense(field, { depth }));
  return { grid, sparse };
}

function sortedTriangles(m: { positions: Float32Array; indices: Uint32Array }): string[] {
  const out: string[] = [];
  for (let t = 0; t < m.indices.length; t += 3) {
    const vs = [0, 1, 2].map((e) => Array.from(m.positions.subarray(3 * m.indices[t + e], 3 * m.indices[t + e] + 3)).join(','));
    const r = vs.indexOf([...vs].sort()[0]); // rotate so the smallest vertex leads; keeps the winding
    out.push([vs[r], vs[(r + 1) % 3], vs[(r + 2) % 3]].join(' '));
  }
  return out.sort();
}

describe('marching cubes on a dense grid', () => {
  test('torus: the same triangles (positions and winding) as the octree path on the same lattice', async () => {
    const { grid, sparse } = await both(torusSdf(0.6, 0.2), [-1, -0.4, -1, 1, 0.4, 1], 5);
    expectClosedManifold(grid.mesh, 'grid torus');
    expect(sortedTriangles(grid.mesh)).toEqual(sortedTriangles(sparse));
    expect(grid.activeBlocks).toBeLessThan(grid.totalBlocks);
  });

  test('random noise with ambiguous faces and a surface cut by the bounds: same triangles as the octree path', async () => {
    for (let seed = 1; seed <= 20; seed++) {
      const r = rng(seed);
      const n = 9;
      const vals = Float32Array.from({ length: (n + 1) ** 3 }, () => r() - 0.45);
      const at = (x: number, y: number, z: number) => vals[Math.round((x + 0.5) * n) + (n + 1) * (Math.round((y + 0.5) * n) + (n + 1) * Math.round((z + 0.5) * n))];
      // The noise is read at the nearest of its 10³ points from each node of our depth-3 lattice.
      const { grid, sparse } = await both(at, [-0.5, -0.5, -0.5, 0.5, 0.5, 0.5], 3);
      expect(sortedTriangles(grid.mesh), `seed ${seed}`).toEqual(sortedTriangles(sparse));
    }
  });

  test('blocks of 8 away from the outer layer (found from inside bits): noise gives the same triangles as the octree path', async () => {
    // 33³ samples: 4 blocks of 8 cells per axis, so 8 blocks touch no outer layer and take the bit path.
    for (let seed = 1; seed <= 4; seed++) {
      const r = rng(100 + seed);
      const n = 32;
      const vals = Float32Array.from({ length: (n + 1) ** 3 }, () => r() - 0.5);
      const at = (x: number, y: number, z: number) => vals[Math.round((x + 0.5) * n) + (n + 1) * (Math.round((y + 0.5) * n) + (n + 1) * Math.round((z + 0.5) * n))];
      const { grid, sparse } = await both(at, [-0.5, -0.5, -0.5, 0.5, 0.5, 0.5], 5, 8);
      expect(grid.totalBlocks).toBe(64);
      expect(sortedTriangles(grid.mesh), `seed ${seed}`).toEqual(sortedTriangles(sparse));
    }
  });

  test('block size changes only the order: every block size gives the same triangles, closed', async () => {
    // 11×9×13 samples of a torus, off-centre so it is cut by the bounds: with blocks of 2, 3, 5, 8 and 16
    // cells the layers end at different planes (none divides every axis), so vertex ids are handed across
    // many layer boundaries. A vertex made twice would leave a crack and a changed triangle list.
    const dims: [number, number, number] = [11, 9, 13];
    const torus = torusSdf(0.3, 0.12);
    const h = 0.08;
    const origin: [number, number, number] = [-0.35, -0.3, -0.5];
    const values = new Float32Array(dims[0] * dims[1] * dims[2]);
    for (let k = 0, q = 0; k < dims[2]; k++)
      for (let j = 0; j < dims[1]; j++) for (let i = 0; i < dims[0]; i++) values[q++] = torus(origin[0] + i * h, origin[1] + j * h, origin[2] + k * h);
    const mesh = (blockSize: number) => marchingCubesGrid(values, dims, { kind: 'sdf', level: 0, origin, spacing: [h, h, h], blockSize }).mesh;
    const reference = sortedTriangles(mesh(8));
    expect(reference.length).toBeGreaterThan(100);
    for (const b of [2, 3, 5, 16]) {
      const m = mesh(b);
      expectClosedManifold(m, `block size ${b}`);
      expect(sortedTriangles(m), `block size ${b}`).toEqual(reference);
    }
  });

  test('density grid gives the same bytes as the sdf grid of its negation', () => {
    // density: inside ⇔ v > level, s = level − v; sdf of −v at −level: inside ⇔ −v < −level, s = −v + level.
    // Negation is exact in floating point, so both kinds must give the same mesh bit for bit.
    const r = rng(7);
    const n = 12;
    const density = Float32Array.from({ length: n ** 3 }, () => r());
    const negated = density.map((x) => -x);
    const opts = { origin: [0, 0, 0] as [number, number, number], spacing: [1, 1, 1] as [number, number, number], blockSize: 4 };
    const a = marchingCubesGrid(density, [n, n, n], { ...opts, kind: 'density', level: 0.55 });
    const b = marchingCubesGrid(negated, [n, n, n], { ...opts, kind: 'sdf', level: -0.55 });
    expect(a.mesh.indices.length).toBeGreaterThan(0);
    expect(a.mesh.positions).toEqual(b.mesh.positions);
    expect(a.mesh.indices).toEqual(b.mesh.indices);
    expectClosedManifold(a.mesh, 'density noise');
  });

  test('a NaN sample counts as outside in both passes: the same mesh as a large positive value there', () => {
    // A solid block of inside samples (no outside sample in its block) with NaN holes: the empty-space
    // test must not skip it, since the marching pass treats NaN as outside (no comparison holds for NaN).
    for (const kind of ['sdf', 'density'] as const) {
      const n = 20;
      const inside = kind === 'sdf' ? -1 : 1, outside = kind === 'sdf' ? 1e6 : -1e6;
      const withNaN = new Float32Array(n ** 3).fill(inside);
      const withBig = new Float32Array(n ** 3).fill(inside);
      for (const at of [5 + 20 * (6 + 20 * 7), 11 + 20 * (12 + 20 * 9), 12 + 20 * (12 + 20 * 9)]) {
        withNaN[at] = NaN;
        withBig[at] = outside;
      }
      const opts = { kind, level: 0, origin: [0, 0, 0] as [number, number, number], spacing: [1, 1, 1] as [number, number, number], blockSize: 8 };
      const a = marchingCubesGrid(withNaN, [n, n, n], opts), b = marchingCubesGrid(withBig, [n, n, n], opts);
      expect(a.mesh.indices.length).toBeGreaterThan(0);
      expect(a.mesh.indices).toEqual(b.mesh.indices);
      expect(a.activeBlocks).toBe(b.activeBlocks);
    }
  });

  test('bad input is refused with the function name', () => {
    expect(() => marchingCubesGrid(new Float32Array(8), [2, 2, 1], { kind: 'sdf', level: 0, origin: [0, 0, 0], spacing: [1, 1, 1] })).toThrow(/^marchingCubesGrid: every axis/);
    expect(() => marchingCubesGrid(new Float32Array(7), [2, 2, 2], { kind: 'sdf', level: 0, origin: [0, 0, 0], spacing: [1, 1, 1] })).toThrow(/^marchingCubesGrid: 7 values/);
    expect(() => marchingCubesGrid(new Float32Array(8), [2, 2, 2], { kind: 'sdf', level: 0, origin: [0, 0, 0], spacing: [1, 1, 1], blockSize: 0 })).toThrow(/^marchingCubesGrid: blockSize must be a whole number ≥ 1, got 0/);
  });

  test('a sphere grid: closed, χ = 2, and only blocks near the surface are touched', async () => {
    const { grid } = await both(sphereSdf(0.3), [-1, -1, -1, 1, 1, 1], 6);
    const r = expectClosedManifold(grid.mesh, 'grid sphere');
    expect(r.eulerCharacteristic).toBe(2);
    expect(grid.activeBlocks / grid.totalBlocks).toBeLessThan(0.25);
    expect(analyzeMesh(grid.mesh).components).toBe(1);
  });
});
