/**
 * Decimation to a budget keeps the mesh closed and manifold, and beats plain marching cubes of the
 * same size at matching the true surface (the torus recipe, whose exact distance is known).
 */
import { beforeAll, describe, expect, test } from 'vitest';
import { decimateMesh, topologyProblem } from '../../../core/decimate/decimate-mesh.js';
import { analyzeMesh } from '../../../core/checks/analyze-mesh.js';
import { runChecks } from '../../../core/checks/run-checks.js';
import { createRecipeField } from '../../../core/fields/recipe/recipe-field.js';
import { sampleOctree } from '../../../core/sampling/sample-octree.js';
import { marchingCubes } from '../../../core/meshing/marching-cubes.js';
import { fieldGradientNormals } from '../../../core/normals/field-gradient-normals.js';
import type { MeshData } from '../../../core/types.js';
import { bvhDistance } from './bvh-distance.js';
import { fnField, torusSdf as torusSdfOf } from '../../helpers/analytic-fields.js';
import { octahedron } from '../checks/test-meshes.js';

// The torus recipe: the shared torus_sdf fixture's shape (manifest: torus_y, R 0.6, r 0.2, bounds −1,−0.4,−1,1,0.4,1).
const R = 0.6, r = 0.2;
const TORUS_RECIPE = JSON.stringify({
  format: 'fieldkiln-recipe',
  version: 1,
  name: 'torus',
  bounds: [-1, -0.4, -1, 1, 0.4, 1],
  root: { type: 'torus', majorRadius: R, minorRadius: r },
});
/** Exact distance to the torus (fixture README, torus_y). */
const torusSdf = (x: number, y: number, z: number) => Math.hypot(Math.hypot(x, z) - R, y) - r;
const DIAG = Math.hypot(2, 0.8, 2); // bounds diagonal, m

/** Largest |sdf| over the mesh's vertices: how far its vertices are from the true surface. */
function vertexError(m: MeshData): number {
  let worst = 0;
  for (const v of m.indices) worst = Math.max(worst, Math.abs(torusSdf(m.positions[3 * v], m.positions[3 * v + 1], m.positions[3 * v + 2])));
  return worst;
}

/** Largest distance from 40 000 points of the true torus (a 200 × 200 grid of its two angles) to the mesh, by BVH. */
function surfaceError(m: MeshData): number {
  const d = bvhDistance(m); // three-mesh-bvh closest point
  let worst = 0;
  const N = 200;
  for (let i = 0; i < N; i++) {
    for (let j = 0; j < N; j++) {
      const u = (2 * Math.PI * (i + 0.5)) / N, w = (2 * Math.PI * (j + 0.5)) / N;
      const rr = R + r * Math.cos(w);
      worst = Math.max(worst, d(rr * Math.cos(u), r * Math.sin(w), rr * Math.sin(u)));
    }
  }
  return worst;
}

describe('decimateMesh on the torus recipe, depth 8 → 20 000 triangles', () => {
  const field = createRecipeField(TORUS_RECIPE, 'torus.recipe.json');
  let full: MeshData;
  let cellSize: number;
  beforeAll(async () => {
    const cells = await sampleOctree(field, { depth: 8, level: 0 });
    cellSize = cells.lattice.cellSize;
    full = marchingCubes(cells);
    full.normals = (await fieldGradientNormals(field, full.positions, full.indices, { step: cellSize / 2 })).normals;
  });

  test('stays closed and manifold with the same genus, within the budget, and closer to the true surface than plain MC of that size', async () => {
    const dec = await decimateMesh(full, { targetTriangles: 20_000 });
    expect(dec.triangles).toBeLessThanOrEqual(20_000);
    expect(dec.triangles).toBeGreaterThan(19_000);
    expect(runChecks(dec.mesh).filter((c) => !c.ok).map((c) => c.name)).toEqual([]);
    const a = analyzeMesh(dec.mesh);
    expect(a.genus).toBe(1); // torus: χ = 0, genus 1
    expect(a.components).toBe(1);

    // Plain marching cubes at the depth whose triangle count is nearest 20 000.
    const plain: { depth: number; mesh: MeshData }[] = [];
    for (const depth of [5, 6, 7]) plain.push({ depth, mesh: marchingCubes(await sampleOctree(field, { depth, level: 0 })) });
    const nearest = plain.reduce((b, p) => (Math.abs(p.mesh.indices.length / 3 - 20_000) < Math.abs(b.mesh.indices.length / 3 - 20_000) ? p : b));

    const decV = vertexError(dec.mesh), decS = surfaceError(dec.mesh);
    const mcV = vertexError(nearest.mesh), mcS = surfaceError(nearest.mesh);
    console.log(
      `torus: full depth 8 ${full.indices.length / 3} triangles → decimated ${dec.triangles} (${dec.attempts.length} attempt(s), repaired ${JSON.stringify(dec.attempts.at(-1)!.repaired)}); ` +
        `measured maxError vs the depth-8 mesh ${(dec.maxError * 1000).toFixed(3)} mm\n` +
        `  decimated:          vertex error ${(decV * 1000).toFixed(4)} mm, surface→mesh ${(decS * 1000).toFixed(4)} mm\n` +
        `  plain MC depth ${nearest.depth} (${nearest.mesh.indices.length / 3} triangles): vertex error ${(mcV * 1000).toFixed(4)} mm, surface→mesh ${(mcS * 1000).toFixed(4)} mm\n` +
        `  limits (0.2% / 0.3% of the ${DIAG.toFixed(3)} m diagonal): ${(DIAG * 2).toFixed(3)} mm / ${(DIAG * 3).toFixed(3)} mm`,
    );
    // The promises: vertices within 0.2% of the bounds diagonal of the true surface, true surface within 0.3% of the mesh.
    expect(decV).toBeLessThan(0.002 * DIAG);
    expect(decS).toBeLessThan(0.003 * DIAG);
    // And better than plain marching cubes of about the same size, on both measures.
    expect(decV).toBeLessThan(mcV);
    expect(decS).toBeLessThan(mcS);
    // The reported maxError is a distance from the depth-8 mesh: at least as large as what the BVH sees
    // from the decimated vertices (which lie on the depth-8 mesh: 0) and no more than the true-surface error plus depth-8 MC error.
    expect(dec.maxError).toBeGreaterThan(0);
    expect(dec.maxError).toBeLessThan(decS + vertexError(full) + cellSize);
  });
});

describe('decimateMesh: small cases', () => {
  test('a budget at or above the triangle count changes nothing', async () => {
    const o = octahedron();
    const r = await decimateMesh(o, { targetTriangles: 8 });
    expect(r.mesh).toBe(o);
    expect(r.maxError).toBe(0);
    expect(r.attempts).toEqual([]);
  });

  test('an octahedron decimated to 4 triangles becomes a closed tetrahedron (the smallest closed mesh)', async () => {
    const r = await decimateMesh(octahedron(), { targetTriangles: 4 });
    expect(r.triangles).toBe(4);
    expect(runChecks(r.mesh).filter((c) => !c.ok)).toEqual([]);
    expect(analyzeMesh(r.mesh).eulerCharacteristic).toBe(2); // 4 − 6 + 4
  });

  test('a torus asked for 20 triangles: smaller results break it, so decimation stops short and says why', async () => {
    // A torus needs at least 14 triangles (Császár's 7-vertex torus); the simplifier pinches the tube long before that.
    const m = marchingCubes(await sampleOctree(fnField(torusSdfOf(0.6, 0.2), [-1, -0.4, -1, 1, 0.4, 1]), { depth: 5, level: 0 }));
    const r = await decimateMesh(m, { targetTriangles: 20 });
    expect(r.triangles).toBeGreaterThan(20);
    expect(r.attempts.length).toBeGreaterThan(1);
    expect(r.attempts.at(-1)!.problem).toBeNull();
    expect(r.attempts[0].problem).toMatch(/non-manifold|genus/);
    expect(r.warnings.join(' ')).toMatch(/stopped short at \d+ triangles \(budget 20\)/);
    const a = analyzeMesh(r.mesh);
    expect(a.watertight).toBe(true);
    expect(a.genus).toBe(1);
  });

  test('topologyProblem names what got worse', () => {
    const good = analyzeMesh(octahedron());
    const worse = { ...good, boundaryEdges: 3, genus: null, watertight: false };
    expect(topologyProblem(good, worse)).toBe('3 boundary edges, no genus (not a closed manifold) instead of 0');
    expect(topologyProblem(good, good)).toBeNull();
  });

  test('misuse: a budget under 4 triangles throws, naming the function', async () => {
    await expect(decimateMesh(octahedron(), { targetTriangles: 2 })).rejects.toThrow(/decimateMesh: targetTriangles/);
  });
});
