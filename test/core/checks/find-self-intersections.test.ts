/**
 * Tests for findSelfIntersections (core/checks/find-self-intersections.ts). Expected answers come
 * from hand geometry (sketched below) and from the fact that a closed convex surface has no
 * self-intersections while two overlapping closed surfaces must cross along a curve.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { findSelfIntersections } from '../../../core/checks/find-self-intersections.js';
import { sampleOctree } from '../../../core/sampling/sample-octree.js';
import { marchingCubes } from '../../../core/meshing/marching-cubes.js';
import { dualContour } from '../../../core/meshing/dual-contouring.js';
import type { MeshData } from '../../../core/types.js';
import { fnField, sphereSdf } from '../../helpers/analytic-fields.js';
import { combineMeshes } from '../../helpers/combine-meshes.js';

const mesh = (pos: number[], idx: number[]): MeshData => ({ positions: Float32Array.from(pos), indices: Uint32Array.from(idx) });

describe('findSelfIntersections', () => {
  it('two triangles crossing like links of a chain give one pair', () => {
    //  T0 lies in z = 0 around the origin; T1 stands in x = 0 and pierces T0's interior:
    //      z
    //      |  T1 (x = 0 plane, from z = -1 to z = 1)
    //  ----+----  T0 (z = 0 plane)
    // Their planes meet on the y axis, where both triangles cover y in (-0.5, 0.5): they cross.
    const m = mesh([-1, -1, 0, 1, -1, 0, 0, 1, 0, 0, -0.5, -1, 0, 0.5, -1, 0, 0, 1], [0, 1, 2, 3, 4, 5]);
    expect(findSelfIntersections(m)).toEqual([0, 1]);
  });

  it('the same pair moved apart, or only touching at a corner, gives none', () => {
    const apart = mesh([-1, -1, 0, 1, -1, 0, 0, 1, 0, 5, -0.5, -1, 5, 0.5, -1, 5, 0, 1], [0, 1, 2, 3, 4, 5]);
    expect(findSelfIntersections(apart)).toEqual([]);
    // T1's apex touches T0's plane exactly at T0's vertex position (a different index): contact, not crossing.
    const touching = mesh([-1, -1, 0, 1, -1, 0, 0, 1, 0, 0, 1, 0, 0.5, 2, 1, -0.5, 2, 1], [0, 1, 2, 3, 4, 5]);
    expect(findSelfIntersections(touching)).toEqual([]);
  });

  it('neighbours that share an edge or a vertex in the regular way are not reported', () => {
    // A square split in two (shared edge) and a third triangle sharing one corner, all flat.
    const m = mesh([0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0, 2, 1, 0, 2, 2, 0], [0, 1, 2, 0, 2, 3, 2, 4, 5]);
    expect(findSelfIntersections(m)).toEqual([]);
  });

  it('a triangle folded flat onto its neighbour, a duplicate, and a fold through a shared vertex are reported', () => {
    // Vertex 3 lies on the same side of edge 0-1 as vertex 2, in the same plane: the two overlap.
    const folded = mesh([0, 0, 0, 1, 0, 0, 0.5, 1, 0, 0.5, 0.5, 0], [0, 1, 2, 1, 0, 3]);
    expect(findSelfIntersections(folded)).toEqual([0, 1]);
    const duplicate = mesh([0, 0, 0, 1, 0, 0, 0, 1, 0], [0, 1, 2, 0, 1, 2]);
    expect(findSelfIntersections(duplicate)).toEqual([0, 1]);
    // Sharing vertex 0 at the origin, T1's far edge passes through T0's interior.
    const through = mesh([0, 0, 0, 2, -1, 0, 2, 1, 0, 1, 0, -1, 1, 0, 1], [0, 1, 2, 0, 3, 4]);
    expect(findSelfIntersections(through)).toEqual([0, 1]);
  });

  it('a large triangle slicing through many small ones is paired with each it crosses, and only those', () => {
    // A strip of small triangles standing in the plane x = 0 (unit squares split in two, y in 0..10,
    // z in −1..1) and one large triangle lying in z = 0 across all of them. The strip is flat and its
    // triangles only meet along shared edges, so every pair found must include the large one (index 20).
    // The large triangle's interior meets every strip triangle: its interval on the line x = 0, z = 0
    // covers y in 0..10, and each strip triangle's runs over the part of its square's diagonal split.
    const pos: number[] = [];
    const idx: number[] = [];
    for (let k = 0; k <= 10; k++) pos.push(0, k, -1, 0, k, 1);
    for (let k = 0; k < 10; k++) idx.push(2 * k, 2 * k + 2, 2 * k + 3, 2 * k, 2 * k + 3, 2 * k + 1);
    pos.push(-1, -5, 0, 1, -5, 0, 0, 25, 0);
    idx.push(22, 23, 24);
    const pairs = findSelfIntersections(mesh(pos, idx));
    const partners = [];
    for (let q = 0; q < pairs.length; q += 2) {
      expect(pairs[q + 1]).toBe(20);
      partners.push(pairs[q]);
    }
    // Every one of the 20 strip triangles reaches z = 0 in its interior: the diagonal of each square runs
    // from z = −1 to z = 1, so both halves of each square cross the line.
    expect(partners).toEqual(Array.from({ length: 20 }, (_, t) => t));
  });

  it('two nearly coplanar neighbours 36 µm apart on a smooth surface are not reported', () => {
    // Two triangles of the depth-9 marching-cubes mesh of sphere_sdf.onnx (shared fixtures), in cells
    // stacked in z, float32 positions as stored. Exact rational arithmetic (Python's fractions, outside
    // Fieldkiln) finds no edge of either crossing the other; their closest vertices are 36 µm apart. The
    // third, far triangle only sets the mesh's size as the sphere's did (ε = 1e-7 × its diagonal).
    const a = [0.07597038149833679, 0.0732421875, -0.4892578125, 0.0732421875, 0.0732421875, -0.48977598547935486, 0.0732421875, 0.076171875, -0.4892645478248596];
    const b = [0.07327762991189957, 0.076171875, -0.4892578125, 0.076171875, 0.076171875, -0.4887085556983948, 0.076171875, 0.0732421875, -0.4892195463180542];
    const far = [0.75, 0.75, 0.75, 0.749, 0.75, 0.75, 0.75, 0.749, 0.75];
    expect(findSelfIntersections(mesh([...a, ...b, ...far], [0, 1, 2, 3, 4, 5, 6, 7, 8]))).toEqual([]);
    // At the same scale a real crossing is still found: a, shrunk by 0.8 about its centroid and tilted by
    // 20 µm along z (its normal is mostly z), pierces a's interior with the edges from its two raised corners.
    const c = [0, 1, 2].map((d) => (a[d] + a[3 + d] + a[6 + d]) / 3);
    const tilted = a.map((x, i) => c[i % 3] + 0.8 * (x - c[i % 3]) + (i % 3 === 2 ? (i === 5 ? -2e-5 : 2e-5) : 0));
    expect(findSelfIntersections(mesh([...a, ...tilted, ...far], [0, 1, 2, 3, 4, 5, 6, 7, 8]))).toEqual([0, 1]);
  });

  it('a duplicate of a triangle with a NaN corner is still reported (it cannot be placed in space)', () => {
    // Triangles 1 and 2 repeat the same three vertex indices (a duplicate, by definition), one of which is
    // NaN; triangle 0 is a clean triangle far away. Only the duplicate pair counts.
    const m = mesh([0, 0, 0, 1, 0, 0, 0, 1, 0, 5, 5, 5, NaN, 5, 5, 5, 6, 5], [0, 1, 2, 3, 4, 5, 3, 4, 5]);
    expect(findSelfIntersections(m)).toEqual([1, 2]);
  });

  it('rejects indices out of range', () => {
    expect(() => findSelfIntersections(mesh([0, 0, 0], [0, 1, 2]))).toThrow(/findSelfIntersections: index 1/);
  });

  describe('closed meshes', () => {
    let sphere: MeshData;
    let dcSphere: MeshData;
    beforeAll(async () => {
      const f = fnField(sphereSdf(0.3), [-0.5, -0.5, -0.5, 0.5, 0.5, 0.5]);
      const cells = await sampleOctree(f, { depth: 6 });
      sphere = marchingCubes(cells);
      dcSphere = (await dualContour(cells, f)).mesh;
    });

    it('a closed sphere mesh (marching cubes and dual contouring) has none', () => {
      // A closed convex surface cannot cross itself (textbook).
      expect(findSelfIntersections(sphere)).toEqual([]);
      expect(findSelfIntersections(dcSphere)).toEqual([]);
    });

    it('two overlapping spheres combined into one mesh cross along a curve', () => {
      // The second copy is moved by 0.3 m: the spheres (r = 0.3 m) overlap, so their surfaces meet
      // in a circle; every triangle pair along it crosses.
      const moved = { positions: sphere.positions.map((v, q) => (q % 3 === 0 ? v + 0.3 : v)), indices: sphere.indices };
      const pairs = findSelfIntersections(combineMeshes(sphere, moved));
      expect(pairs.length / 2).toBeGreaterThan(50);
      const T = sphere.indices.length / 3;
      for (let q = 0; q < pairs.length; q += 2) {
        expect(pairs[q]).toBeLessThan(T); // one from each sphere, since each alone is clean
        expect(pairs[q + 1]).toBeGreaterThanOrEqual(T);
      }
    });
  });
});
