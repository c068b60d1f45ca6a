/** LODs: each about half the triangles of the one before, each checked closed and manifold, errors (from the full mesh) growing. */
import { describe, expect, test } from 'vitest';
import { buildLods, MIN_LOD_TRIANGLES } from '../../../core/decimate/build-lods.js';
import { decimateMesh } from '../../../core/decimate/decimate-mesh.js';
import { measureDeviation } from '../../../core/decimate/measure-deviation.js';
import { runChecks } from '../../../core/checks/run-checks.js';
import { analyzeMesh } from '../../../core/checks/analyze-mesh.js';
import { sampleOctree } from '../../../core/sampling/sample-octree.js';
import { marchingCubes } from '../../../core/meshing/marching-cubes.js';
import { areaWeightedNormals } from '../../../core/normals/area-weighted-normals.js';
import { fnField, sphereSdf } from '../../helpers/analytic-fields.js';
import { octahedron } from '../checks/test-meshes.js';

describe('buildLods', () => {
  test('sphere (depth 6) with a 4 000-triangle base: 3 levels of about 2 000, 1 000 and 500 triangles, all closed genus 0', async () => {
    const m = marchingCubes(await sampleOctree(fnField(sphereSdf(0.5), [-0.75, -0.75, -0.75, 0.75, 0.75, 0.75]), { depth: 6, level: 0 }));
    m.normals = areaWeightedNormals(m.positions, m.indices);
    const base = (await decimateMesh(m, { targetTriangles: 4000 })).mesh;
    const lods = await buildLods(m, base, 3);
    expect(lods.map((l) => l.targetTriangles)).toEqual([2000, 1000, 500]);
    let previous = 4000;
    let previousError = 0;
    for (const l of lods) {
      expect(l.triangles).toBeLessThanOrEqual(Math.floor(previous / 2));
      expect(l.triangles).toBeGreaterThan(0.45 * previous); // "about half" (glTF-Transform's simplify tests check ratios likewise)
      expect(runChecks(l.mesh).filter((c) => !c.ok)).toEqual([]);
      expect(analyzeMesh(l.mesh).genus).toBe(0);
      expect(l.maxError).toBeGreaterThan(previousError); // fewer triangles, larger distance from the full mesh
      // Each level is decimated from the level before, but its error is its distance from the full mesh.
      expect(l.maxError).toBe(measureDeviation(m, l.mesh).max);
      previous = l.triangles;
      previousError = l.maxError;
    }
    // Chord error of a sphere: a flat triangle of circumradius a sits a²/(2R) inside it; 500 triangles of
    // area 4πR²/500 have a ≈ 0.07 m, so about 5 mm (estimate from memory of the sagitta formula), well under 2 cm.
    expect(lods[2].maxError).toBeLessThan(0.02);
  });

  test(`the chain ends before a level would have under ${MIN_LOD_TRIANGLES} triangles, with a warning`, async () => {
    const lods = await buildLods(octahedron(), octahedron(), 3);
    expect(lods).toEqual([]);
    const m = marchingCubes(await sampleOctree(fnField(sphereSdf(0.5), [-0.75, -0.75, -0.75, 0.75, 0.75, 0.75]), { depth: 3, level: 0 }));
    const few = await buildLods(m, (await decimateMesh(m, { targetTriangles: 40 })).mesh, 5); // 20, then 10 < 16: stops after one level
    expect(few).toHaveLength(1);
    expect(few[0].warnings.join(' ')).toMatch(/only 1 of 5 LODs/);
  });
});
