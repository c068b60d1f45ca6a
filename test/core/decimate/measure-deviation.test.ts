/** Our grid-based closest-point distances against three-mesh-bvh's, and deviations with known answers. */
import { describe, expect, test } from 'vitest';
import { TriangleGrid, pointTriangleDistance2 } from '../../../core/decimate/triangle-grid.js';
import { measureDeviation } from '../../../core/decimate/measure-deviation.js';
import { sampleOctree } from '../../../core/sampling/sample-octree.js';
import { marchingCubes } from '../../../core/meshing/marching-cubes.js';
import { fnField, sphereSdf } from '../../helpers/analytic-fields.js';
import { bvhDistance } from './bvh-distance.js';
import { octahedron } from '../checks/test-meshes.js';

describe('TriangleGrid', () => {
  test('distances agree with three-mesh-bvh at 2300 points near and far from an MC sphere', async () => {
    const m = marchingCubes(await sampleOctree(fnField(sphereSdf(0.5), [-0.75, -0.75, -0.75, 0.75, 0.75, 0.75]), { depth: 5, level: 0 }));
    const grid = new TriangleGrid(m);
    const ref = bvhDistance(m); // source: three-mesh-bvh closestPointToPoint
    let seed = 7;
    const rnd = () => ((seed = (seed * 16807) % 2147483647) / 2147483647) * 2 - 1;
    for (let i = 0; i < 2300; i++) {
      const s = i < 2000 ? 0.8 : 3; // mostly near the surface, some far outside the grid
      const [x, y, z] = [rnd() * s, rnd() * s, rnd() * s];
      expect(grid.distance(x, y, z)).toBeCloseTo(ref(x, y, z), 6);
    }
  });

  test('with `enough`, a point within it stops early at some triangle that close; beyond it, the exact distance', async () => {
    const m = marchingCubes(await sampleOctree(fnField(sphereSdf(0.5), [-0.75, -0.75, -0.75, 0.75, 0.75, 0.75]), { depth: 5, level: 0 }));
    const grid = new TriangleGrid(m);
    const ref = bvhDistance(m); // source: three-mesh-bvh closestPointToPoint
    let seed = 11;
    const rnd = () => ((seed = (seed * 16807) % 2147483647) / 2147483647) * 2 - 1;
    for (let i = 0; i < 1000; i++) {
      const [x, y, z] = [rnd() * 0.8, rnd() * 0.8, rnd() * 0.8];
      const d = ref(x, y, z);
      const enough = 0.05;
      const got = grid.distance(x, y, z, enough);
      if (d > enough) expect(got).toBeCloseTo(d, 6);
      else {
        expect(got).toBeLessThanOrEqual(enough + 1e-9);
        expect(got).toBeGreaterThanOrEqual(d - 1e-9);
      }
    }
  });

  test('point–triangle distance: the regions of a right triangle (hand-computed)', () => {
    //  (0,1,0)
    //    |\
    //    | \
    //  (0,0,0)──(1,0,0)
    const p = new Float32Array([0, 0, 0, 1, 0, 0, 0, 1, 0]);
    expect(pointTriangleDistance2(0.25, 0.25, 2, p, 0, 1, 2)).toBeCloseTo(4, 12); // above the face
    expect(pointTriangleDistance2(-1, -1, 0, p, 0, 1, 2)).toBeCloseTo(2, 12); // nearest the corner (0,0,0)
    expect(pointTriangleDistance2(0.5, -2, 0, p, 0, 1, 2)).toBeCloseTo(4, 12); // nearest the edge y = 0
    expect(pointTriangleDistance2(1, 1, 0, p, 0, 1, 2)).toBeCloseTo(0.5, 12); // nearest the hypotenuse, at (0.5, 0.5)
  });
});

describe('measureDeviation', () => {
  test('a mesh against itself: 0', () => {
    const o = octahedron();
    expect(measureDeviation(o, o).max).toBeLessThan(1e-12);
  });

  test('an octahedron against a copy scaled by 1.1: 0.1/√3 from the small one, 0.1 from the big one’s corners', () => {
    const o = octahedron();
    const big = { positions: o.positions.map((x) => x * 1.1), indices: o.indices };
    const d = measureDeviation(o, big);
    // Every face plane of the small octahedron, e.g. x + y + z = 1, lies 0.1/√3 inside the big one's
    // (x + y + z = 1.1); the small one's vertices and centroids are that far from the big surface.
    expect(d.aToB).toBeCloseTo(0.1 / Math.sqrt(3), 6);
    // The big one's corner (1.1, 0, 0) is nearest the small one's corner (1, 0, 0): 0.1.
    expect(d.bToA).toBeCloseTo(0.1, 6);
    expect(d.max).toBe(Math.max(d.aToB, d.bToA));
    // The same answer with a grid of the first mesh built beforehand (the pipeline shares one across LODs).
    expect(measureDeviation(o, big, new TriangleGrid(o))).toEqual(d);
  });
});
