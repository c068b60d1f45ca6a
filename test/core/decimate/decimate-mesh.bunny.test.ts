/**
 * The error and triangle-count claims on a real scan: the Stanford bunny (npm `bunny`, from the
 * Stanford 3D Scanning Repository, Stanford University Computer Graphics Laboratory; 1 811 vertices,
 * 3 674 triangles in that package), scaled to a 29 cm figurine. Its SDF: sign from generalized
 * winding numbers (Jacobson et al. 2013), magnitude from the closest-point distance
 * (`mesh-sdf.ts`). Extracted at depth 7, decimated to 5 000 triangles, compared with the scan.
 */
import { createRequire } from 'node:module';
import { describe, expect, test } from 'vitest';
import { decimateMesh } from '../../../core/decimate/decimate-mesh.js';
import { analyzeMesh } from '../../../core/checks/analyze-mesh.js';
import { runChecks } from '../../../core/checks/run-checks.js';
import { sampleOctree } from '../../../core/sampling/sample-octree.js';
import { marchingCubes } from '../../../core/meshing/marching-cubes.js';
import { areaWeightedNormals } from '../../../core/normals/area-weighted-normals.js';
import type { Bounds } from '../../../core/types.js';
import { meshSdfField, WindingNumber } from './mesh-sdf.js';
import { oneSidedDistance } from './bvh-distance.js';

const bunny = createRequire(import.meta.url)('bunny') as { positions: number[][]; cells: number[][] };
const SCALE = 0.03; // scan units → metres: the bunny stands 0.29 m tall

describe('the Stanford bunny: SDF from the scan, depth 7, decimated to 5 000 triangles', () => {
  test('closed, manifold, within the budget, and close to the scan (Hausdorff distance reported)', async () => {
    const positions = Float32Array.from(bunny.positions.flat().map((x) => x * SCALE));
    const indices = Uint32Array.from(bunny.cells.flat());
    const scan = { positions, indices };
    const lo = [0, 1, 2].map((a) => Math.min(...bunny.positions.map((p) => p[a] * SCALE)));
    const hi = [0, 1, 2].map((a) => Math.max(...bunny.positions.map((p) => p[a] * SCALE)));
    const pad = 0.05 * Math.max(...[0, 1, 2].map((a) => hi[a] - lo[a]));
    const bounds = [lo[0] - pad, lo[1] - pad, lo[2] - pad, hi[0] + pad, hi[1] + pad, hi[2] + pad] as Bounds;
    const diag = Math.hypot(hi[0] - lo[0], hi[1] - lo[1], hi[2] - lo[2]);

    // The winding number is 1 inside and 0 outside a closed mesh (Jacobson et al. 2013): exactly so
    // when summed over every triangle; the far-field approximation stays within 0.05 of that.
    const wn = new WindingNumber(positions, indices);
    const mid = [(lo[0] + hi[0]) / 2, (lo[1] + hi[1]) / 2, (lo[2] + hi[2]) / 2] as const;
    expect(wn.exact(...mid)).toBeCloseTo(1, 6);
    expect(wn.exact(hi[0] + 1, hi[1] + 1, hi[2] + 1)).toBeCloseTo(0, 6);
    for (let i = 0; i < 40; i++) {
      const q = [0, 1, 2].map((a) => lo[a] - pad + ((hi[a] - lo[a] + 2 * pad) * ((i * [0.618, 0.414, 0.732][a]) % 1))) as [number, number, number];
      expect(Math.abs(wn.at(...q) - wn.exact(...q))).toBeLessThan(0.05);
    }

    const field = meshSdfField(positions, indices, bounds, 'stanford-bunny');
    const t0 = performance.now();
    const cells = await sampleOctree(field, { depth: 7, level: 0 });
    const full = marchingCubes(cells);
    const tSample = (performance.now() - t0) / 1000;
    // Mesh normals guide the simplifier here: field normals would cost 6 more SDF evaluations per vertex (≈ 90 µs each).
    full.normals = areaWeightedNormals(full.positions, full.indices);
    const t1 = performance.now();
    const dec = await decimateMesh(full, { targetTriangles: 5000 });
    const tDecimate = (performance.now() - t1) / 1000;

    const fullCheck = analyzeMesh(full);
    expect(fullCheck.watertight).toBe(true);
    expect(dec.triangles).toBeLessThanOrEqual(5000);
    expect(dec.triangles).toBeGreaterThan(4500);
    expect(runChecks(dec.mesh).filter((c) => !c.ok).map((c) => c.name)).toEqual([]);
    const a = analyzeMesh(dec.mesh);
    expect(a.genus).toBe(fullCheck.genus);
    expect(a.components).toBe(fullCheck.components);

    // Hausdorff distance to the scan, sampled at vertices and triangle centroids both ways (three-mesh-bvh).
    const meshToScan = oneSidedDistance(dec.mesh, scan);
    const scanToMesh = oneSidedDistance(scan, dec.mesh);
    const hausdorff = Math.max(meshToScan, scanToMesh);
    const mcHausdorff = Math.max(oneSidedDistance(full, scan), oneSidedDistance(scan, full));
    const h = cells.lattice.cellSize;
    console.log(
      `bunny (diagonal ${(diag * 1000).toFixed(1)} mm, cell ${(h * 1000).toFixed(2)} mm): depth 7 MC ${full.indices.length / 3} triangles ` +
        `(${cells.evaluations} evaluations, ${tSample.toFixed(1)} s), genus ${fullCheck.genus}, Hausdorff to the scan ${(mcHausdorff * 1000).toFixed(3)} mm\n` +
        `  decimated to ${dec.triangles} triangles in ${tDecimate.toFixed(1)} s: maxError vs depth-7 mesh ${(dec.maxError * 1000).toFixed(3)} mm; ` +
        `Hausdorff to the scan ${(hausdorff * 1000).toFixed(3)} mm (mesh→scan ${(meshToScan * 1000).toFixed(3)}, scan→mesh ${(scanToMesh * 1000).toFixed(3)}) = ${((100 * hausdorff) / diag).toFixed(3)}% of the diagonal`,
    );
    // Marching cubes on a distance field puts vertices within a fraction of a cell of the surface; decimation
    // to 5 000 triangles may add up to about a cell more. Our bound: 2 cells (our choice, from the two sources).
    expect(hausdorff).toBeLessThan(2 * h);
    // The measured maxError is a distance from the depth-7 mesh, so the scan distance cannot exceed it by more than the MC error.
    expect(hausdorff).toBeLessThanOrEqual(dec.maxError + mcHausdorff + 1e-9);
  });
});
