import { describe, expect, test } from 'vitest';
import { marchingCubes } from '../../../core/meshing/marching-cubes.js';
import { sampleOctree } from '../../../core/sampling/sample-octree.js';
import { sampleDense } from '../../../core/sampling/sample-dense.js';
import { boxSdf, fnField, sphereSdf, torusSdf } from '../../helpers/analytic-fields.js';
import { expectClosedManifold, expectMesh, rng } from '../../helpers/expect-mesh.js';
import type { Bounds } from '../../../core/types.js';

const CUBE: Bounds = [-0.75, -0.75, -0.75, 0.75, 0.75, 0.75];

/**
 * Tolerance for area and volume of a marching-cubes mesh of an exact SDF with cell size h and largest
 * principal curvature κ: linear interpolation places vertices within O(κh²) of the surface and the
 * flat triangles miss O((κh)²) of the area, so we allow a relative error of (κh)² (our own bound, a
 * generous constant-1 version of the second-order convergence the method is known for).
 */
const tol = (kappa: number, h: number) => (kappa * h) ** 2;

describe('marching cubes on analytic fields', () => {
  for (const depth of [5, 6, 7]) {
    test(`sphere r=0.5 at depth ${depth}: one closed genus-0 component, area 4πr² and volume 4/3πr³ within (κh)²`, async () => {
      const r = 0.5;
      const cells = await sampleOctree(fnField(sphereSdf(r), CUBE), { depth });
      const rep = expectMesh(marchingCubes(cells), { components: 1, genus: 0, euler: 2 });
      const t = tol(1 / r, cells.lattice.cellSize);
      // Source: textbook formulas, area 4πr², volume 4/3 πr³.
      expect(Math.abs(rep.area / (4 * Math.PI * r * r) - 1)).toBeLessThan(t);
      expect(Math.abs(rep.volume / ((4 / 3) * Math.PI * r ** 3) - 1)).toBeLessThan(t);
    });
  }

  test('torus R=0.6 r=0.2 at depth 7: genus 1 (χ = 0), area 4π²Rr and volume 2π²Rr² within (κh)²', async () => {
    const [R, r] = [0.6, 0.2];
    const cells = await sampleOctree(fnField(torusSdf(R, r), [-1, -0.4, -1, 1, 0.4, 1]), { depth: 7 });
    const rep = expectMesh(marchingCubes(cells), { components: 1, genus: 1, euler: 0 });
    const t = tol(1 / r, cells.lattice.cellSize);
    // Source: Pappus's centroid theorems: area 4π²Rr, volume 2π²Rr².
    expect(Math.abs(rep.area / (4 * Math.PI ** 2 * R * r) - 1)).toBeLessThan(t);
    expect(Math.abs(rep.volume / (2 * Math.PI ** 2 * R * r * r) - 1)).toBeLessThan(t);
  });

  test('box whose faces lie exactly on lattice planes: closed, no zero-area triangles', async () => {
    // Bounds [-0.5, 0.5] at depth 5: h = 1/32, and a half extent of 8/32 puts every face on a node plane,
    // so whole planes of samples are exactly at the level (the case that makes common implementations emit slivers).
    const cells = await sampleOctree(fnField(boxSdf([0.25, 0.25, 0.25]), [-0.5, -0.5, -0.5, 0.5, 0.5, 0.5]), { depth: 5 });
    const rep = expectMesh(marchingCubes(cells), { components: 1, genus: 0 });
    // A sample exactly at the level counts as outside, so the faces sit on the planes (to within EDGE_MARGIN·h);
    // marching cubes cuts each of the 12 edges (length 0.5) with a chamfer of cross-section at most h²/2.
    const h = cells.lattice.cellSize;
    expect(rep.volume).toBeLessThanOrEqual(0.125);
    expect(0.125 - rep.volume).toBeLessThan(12 * 0.5 * (h * h) / 2 * 1.05);
  });

  test('sphere whose radius hits lattice nodes: closed, no zero-area triangles', async () => {
    // h = 1/32 on [-0.5,0.5]; r = 10/32 puts the nodes (±10,0,0)/32 etc. exactly on the surface.
    const cells = await sampleOctree(fnField(sphereSdf(10 / 32), [-0.5, -0.5, -0.5, 0.5, 0.5, 0.5]), { depth: 5 });
    expectMesh(marchingCubes(cells), { components: 1, genus: 0 });
  });

  test('random trilinear noise (many ambiguous faces): always closed, manifold and wound outward', async () => {
    // A 7³ lattice of random values, sampled by a field that returns them exactly at nodes: every
    // configuration including the face-ambiguous ones appears many times over the seeds.
    for (let seed = 1; seed <= 200; seed++) {
      const rand = rng(seed);
      const n = 8;
      const vals = new Float32Array((n + 1) ** 3).map(() => rand() - 0.5);
      const at = (x: number, y: number, z: number) => {
        const i = Math.round((x + 0.5) * n), j = Math.round((y + 0.5) * n), k = Math.round((z + 0.5) * n);
        return vals[i + (n + 1) * (j + (n + 1) * k)];
      };
      const field = fnField(at, [-0.5, -0.5, -0.5, 0.5, 0.5, 0.5], { lipschitz: 1e9 });
      const cells = await sampleDense(field, { depth: 3 });
      if (cells.count === 0) continue;
      const mesh = marchingCubes(cells);
      const r = expectClosedManifold(mesh, `seed ${seed}`);
      // Each component of a closed orientable surface has even Euler characteristic.
      for (const c of r.perComponent) expect(Math.abs(c.eulerCharacteristic % 2)).toBe(0);
    }
  });

  test('a surface leaving the bounds is closed at the bounds and counted', async () => {
    // Sphere r = 0.5 in bounds ±0.3: the mesh is the sphere clipped by the box, a closed cap-bounded solid.
    const cells = await sampleOctree(fnField(sphereSdf(0.5), [-0.3, -0.3, -0.3, 0.3, 0.3, 0.3]), { depth: 6 });
    expect(cells.closedAtBounds).toBeGreaterThan(0);
    const rep = expectMesh(marchingCubes(cells), { components: 1, genus: 0 });
    // Volume of the box ∩ ball: the whole 0.6³ box except its corners; bounded by the box volume.
    expect(rep.volume).toBeLessThan(0.6 ** 3);
    expect(rep.volume).toBeGreaterThan(0.6 ** 3 * 0.9);
  });

  test('empty field gives no surface cells', async () => {
    const cells = await sampleOctree(fnField(sphereSdf(0.1, [5, 5, 5]), CUBE), { depth: 5 });
    expect(cells.count).toBe(0);
    expect(marchingCubes(cells).indices.length).toBe(0);
  });
});

describe('marching cubes: lattice normals', () => {
  const angleDeg = (n: Float32Array, v: number, ax: number, ay: number, az: number) => {
    const len = Math.hypot(ax, ay, az);
    const d = (n[3 * v] * ax + n[3 * v + 1] * ay + n[3 * v + 2] * az) / len;
    return (Math.acos(Math.min(1, d)) * 180) / Math.PI;
  };

  test('exact for a linear field: every vertex away from the bounds gets the plane\'s normal', async () => {
    // Trilinear interpolation reproduces an affine function exactly, so its gradient is the plane's normal.
    // Coefficients with few bits keep every sample exact in float32 (with 0.3, −0.5, 0.8 − 0.1 the
    // rounding of the stored values alone tilts normals by up to 0.01°).
    const [a, b, c] = [0.25, -0.5, 0.75];
    const cells = await sampleOctree(fnField((x, y, z) => a * x + b * y + c * z - 0.125, CUBE, { lipschitz: Math.hypot(a, b, c) }), { depth: 5 });
    const mesh = marchingCubes(cells, { normals: true });
    const h = cells.lattice.cellSize;
    let checked = 0, worst = 0;
    for (let v = 0; v < mesh.positions.length / 3; v++) {
      const p = [0, 1, 2].map((k) => mesh.positions[3 * v + k]);
      if (p.some((x) => Math.abs(x) > 0.75 - 2 * h)) continue; // the outer layer counts as outside
      worst = Math.max(worst, angleDeg(mesh.normals!, v, a, b, c));
      checked++;
    }
    expect(checked).toBeGreaterThan(500);
    expect(worst).toBeLessThan(1e-4); // float32 normals
  });

  // On a sphere of radius r the error is first order: across the edge the normal is the lattice's central
  // difference interpolated to the vertex, but along it the edge's own difference, the gradient at the
  // edge's middle, |t − ½|·h from the vertex: the normal turns by at most κh/2 = h/(2r) there (our own
  // bound from that argument).
  const worstOnSphere: number[] = [];
  for (const depth of [6, 7]) {
    test(`sphere r=0.5 at depth ${depth}: within h/(2r) of the analytic normal p/|p|, and the same triangles as without normals`, async () => {
      const r = 0.5;
      const cells = await sampleOctree(fnField(sphereSdf(r), CUBE), { depth });
      const plain = marchingCubes(cells);
      const mesh = marchingCubes(cells, { normals: true });
      expect(Array.from(mesh.indices)).toEqual(Array.from(plain.indices));
      expect(Array.from(mesh.positions)).toEqual(Array.from(plain.positions));
      expect(mesh.normals).toHaveLength(mesh.positions.length);
      let worst = 0;
      for (let v = 0; v < mesh.positions.length / 3; v++) {
        worst = Math.max(worst, angleDeg(mesh.normals!, v, mesh.positions[3 * v], mesh.positions[3 * v + 1], mesh.positions[3 * v + 2]));
      }
      const bound = ((cells.lattice.cellSize / (2 * r)) * 180) / Math.PI;
      console.log(`sphere depth ${depth}: lattice normals at most ${worst.toFixed(4)}° from p/|p| (bound ${bound.toFixed(4)}°)`);
      expect(worst).toBeLessThan(bound);
      worstOnSphere.push(worst);
      if (worstOnSphere.length === 2) expect(worstOnSphere[1]).toBeLessThan(worstOnSphere[0]); // finer lattice, closer normals
    });
  }
});

