/**
 * Tests for dualContour (core/meshing/dual-contouring.ts). Truths come from outside the project:
 * analytic formulas (box corners and faces, sphere, torus, a slab with two round holes), the shared
 * fixture manifest (../shared/fixtures/manifest.json), and hand-built lattice configurations whose
 * topology is known. Figures for marching cubes on the same cells are printed beside ours.
 */
import path from 'node:path';
import { readFileSync } from 'node:fs';
import { beforeAll, describe, expect, it } from 'vitest';
import { dualContour, DUAL_CONTOUR_DEFAULTS } from '../../../core/meshing/dual-contouring.js';
import { marchingCubes } from '../../../core/meshing/marching-cubes.js';
import { sampleOctree, type SurfaceCells } from '../../../core/sampling/sample-octree.js';
import { analyzeMesh } from '../../../core/checks/analyze-mesh.js';
import { findSelfIntersections } from '../../../core/checks/find-self-intersections.js';
import { createRecipeField } from '../../../core/fields/recipe/recipe-field.js';
import type { Field } from '../../../core/fields/field.js';
import type { Bounds, MeshData } from '../../../core/types.js';
import { openField } from '../../../app/fields/open-field.js';
import { boxSdf, fnField, sphereSdf, torusSdf } from '../../helpers/analytic-fields.js';
import { expectClosedManifold as expectClosedManifoldShared } from '../../helpers/expect-mesh.js';
import { FIXTURES } from '../../helpers/fixtures.js';
import { angleDeg, apply, applyT, distancesToMesh, rotationMatrix, triangleNormal, vertex, type V3 } from './meshing-test-utils.js';

const fixtures = FIXTURES;
const CUBE: Bounds = [-0.5, -0.5, -0.5, 0.5, 0.5, 0.5];

const recipe = (root: unknown, bounds: Bounds = CUBE) => JSON.stringify({ format: 'fieldkiln-recipe', version: 1, bounds, root });

/** Closed, edge- and vertex-manifold, consistently wound outward, no degenerate or duplicate triangles. */
function expectClosedManifold(mesh: MeshData) {
  const r = expectClosedManifoldShared(mesh, 'dual contouring');
  const seen = new Set<string>();
  for (let t = 0; t < mesh.indices.length; t += 3) {
    const key = [mesh.indices[t], mesh.indices[t + 1], mesh.indices[t + 2]].sort((a, b) => a - b).join();
    expect(seen.has(key)).toBe(false);
    seen.add(key);
  }
  return r;
}

const pct = (x: number) => `${(100 * x).toFixed(3)}%`;

describe('dualContour', () => {
  describe('rotated box: sharp corners, faces and normals', () => {
    // Box of half extents (0.30, 0.20, 0.10) m rotated 30° about (1,2,3)/|(1,2,3)|, depth 6 over a 1 m cube.
    const HALF: V3 = [0.3, 0.2, 0.1];
    const R = rotationMatrix([1, 2, 3], 30);
    const field = createRecipeField(recipe({ type: 'box', size: [0.6, 0.4, 0.2], rotate: { axis: [1, 2, 3], degrees: 30 } }), 'box');
    const corners = Array.from({ length: 8 }, (_, c) => apply(R, [c & 1 ? HALF[0] : -HALF[0], c & 2 ? HALF[1] : -HALF[1], c & 4 ? HALF[2] : -HALF[2]]));
    let cells: SurfaceCells;
    let h: number;

    /** The three figures the issue names, in cell widths and degrees. */
    function figures(mesh: MeshData) {
      const V = mesh.positions.length / 3;
      const sdf = boxSdf(HALF);
      let surface = 0;
      for (let v = 0; v < V; v++) surface = Math.max(surface, Math.abs(sdf(...applyT(R, vertex(mesh, v)))));
      let corner = 0;
      for (const c of corners) {
        let best = Infinity;
        for (let v = 0; v < V; v++) {
          const p = vertex(mesh, v);
          best = Math.min(best, Math.hypot(p[0] - c[0], p[1] - c[1], p[2] - c[2]));
        }
        corner = Math.max(corner, best);
      }
      // Flat-face triangles: centroid within half a cell of a face's plane and more than half a cell
      // inside that face's edges (so triangles that span a crease are left out).
      let angle = 0;
      let flat = 0;
      for (let t = 0; t < mesh.indices.length / 3; t++) {
        const ps = [0, 1, 2].map((q) => vertex(mesh, mesh.indices[3 * t + q]));
        const l = applyT(R, [0, 1, 2].map((d) => (ps[0][d] + ps[1][d] + ps[2][d]) / 3) as V3);
        for (let a = 0; a < 3; a++) {
          const b = (a + 1) % 3, c = (a + 2) % 3;
          if (Math.abs(Math.abs(l[a]) - HALF[a]) > 0.5 * h) continue;
          if (Math.abs(l[b]) > HALF[b] - 0.5 * h || Math.abs(l[c]) > HALF[c] - 0.5 * h) continue;
          const n: V3 = [0, 0, 0];
          n[a] = Math.sign(l[a]);
          angle = Math.max(angle, angleDeg(triangleNormal(mesh, t), apply(R, n)));
          flat++;
        }
      }
      return { corner: corner / h, surface: surface / h, angle, flat };
    }

    let dc: ReturnType<typeof figures>;
    let mc: ReturnType<typeof figures>;
    let dcMesh: MeshData;
    beforeAll(async () => {
      cells = await sampleOctree(field, { depth: 6 });
      h = cells.lattice.cellSize;
      dcMesh = (await dualContour(cells, field)).mesh;
      dc = figures(dcMesh);
      mc = figures(marchingCubes(cells));
      console.log(
        `rotated box, depth 6 (h = ${h.toFixed(5)} m), worst over 8 corners / all vertices / flat-face triangles:\n` +
          `  dual contouring: corner ${dc.corner.toExponential(2)} h, surface ${dc.surface.toExponential(2)} h, normal ${dc.angle.toFixed(3)}° (${dc.flat} triangles)\n` +
          `  marching cubes:  corner ${mc.corner.toFixed(3)} h, surface ${mc.surface.toFixed(3)} h, normal ${mc.angle.toFixed(2)}° (${mc.flat} triangles)`,
      );
    });

    it('the corner formula matches the recipe (field value 0 at each corner)', async () => {
      // Rodrigues' rotation, as the recipe schema documents for `rotate`.
      const vals = await field.evaluate(Float32Array.from(corners.flat()));
      for (const v of vals) expect(Math.abs(v)).toBeLessThan(1e-6);
    });

    it('matches all 8 true corners within 5% of a cell width', () => {
      expect(dc.corner).toBeLessThan(0.05); // issue 3's bound
    });

    it('puts every vertex within 2% of a cell width of the true surface', () => {
      expect(dc.surface).toBeLessThan(0.02); // issue 3's bound
    });

    it('gives flat-face triangle normals within 1° of the true face normals', () => {
      expect(dc.flat).toBeGreaterThan(5000);
      expect(dc.angle).toBeLessThan(1); // issue 3's bound
    });

    it('does far better than marching cubes on the same cells, and stays closed and clean', () => {
      // Marching cubes puts vertices on cell edges, so it cannot reach corners or faces' planes
      // between them: its figures are worse by orders of magnitude (printed above).
      expect(mc.corner).toBeGreaterThan(10 * dc.corner);
      expect(mc.angle).toBeGreaterThan(10 * dc.angle);
      const r = expectClosedManifold(dcMesh);
      expect(r.eulerCharacteristic).toBe(2);
      expect(findSelfIntersections(dcMesh)).toEqual([]);
      // Volume of the box: 0.6 × 0.4 × 0.2 = 0.048 m³ (exact up to rounding of the corners).
      expect(r.volume).toBeCloseTo(0.048, 5);
    });
  });

  describe('box ∪ cylinder with a notch cut: crease curves', () => {
    // Local frame: box half extents (bx, by, bz); a cylinder (axis y, radius r, half height hc) at x = cx
    // through it; a box cut removes the cylinder's top half on the +x side above y = yn (a notch).
    // The whole part is rotated 20° about (1, −1, 2).
    const cx = 0.05, r = 0.1, yn = 0.15, hc = 0.25, bx = 0.25, by = 0.1, bz = 0.15;
    const ROT = { axis: [1, -1, 2] as V3, degrees: 20 };
    const R = rotationMatrix(ROT.axis, ROT.degrees);
    const field = createRecipeField(
      recipe({
        type: 'difference',
        rotate: ROT,
        children: [
          { type: 'union', children: [{ type: 'box', size: [2 * bx, 2 * by, 2 * bz] }, { type: 'cylinder', radius: r, height: 2 * hc, translate: [cx, 0, 0] }] },
          { type: 'box', size: [0.3, 0.2, 0.4], translate: [cx + 0.15, yn + 0.1, 0] },
        ],
      }),
      'crease',
    );

    /** Points along the true creases, about `step` metres apart (local frame, then rotated). */
    function creasePoints(step: number): V3[] {
      const pts: V3[] = [];
      const arc = (y: number, t0: number, t1: number) => {
        const n = Math.ceil((r * (t1 - t0)) / step);
        for (let q = 0; q <= n; q++) {
          const t = t0 + ((t1 - t0) * q) / n;
          pts.push([cx + r * Math.cos(t), y, r * Math.sin(t)]);
        }
      };
      const seg = (a: V3, b: V3) => {
        const n = Math.ceil(Math.hypot(b[0] - a[0], b[1] - a[1], b[2] - a[2]) / step);
        for (let q = 0; q <= n; q++) pts.push([0, 1, 2].map((d) => a[d] + ((b[d] - a[d]) * q) / n) as V3);
      };
      arc(by, 0, 2 * Math.PI); // cylinder meets the box's top face (concave)
      arc(-by, 0, 2 * Math.PI); // ... and its bottom face (concave)
      arc(-hc, 0, 2 * Math.PI); // cylinder's bottom rim
      arc(hc, Math.PI / 2, 1.5 * Math.PI); // top rim, the half the notch left
      arc(yn, -Math.PI / 2, Math.PI / 2); // notch floor meets the cylinder side
      seg([cx, yn, r], [cx, hc, r]); // notch wall meets the cylinder side
      seg([cx, yn, -r], [cx, hc, -r]);
      seg([cx, hc, -r], [cx, hc, r]); // notch wall meets the top cap
      seg([cx, yn, -r], [cx, yn, r]); // notch wall meets the notch floor (concave)
      for (const s1 of [-1, 1]) {
        for (const s2 of [-1, 1]) {
          seg([-bx, s1 * by, s2 * bz], [bx, s1 * by, s2 * bz]); // the box's 12 edges
          seg([s1 * bx, -by, s2 * bz], [s1 * bx, by, s2 * bz]);
          seg([s1 * bx, s2 * by, -bz], [s1 * bx, s2 * by, bz]);
        }
      }
      return pts.map((p) => apply(R, p));
    }

    it('keeps its crease edges: largest distance from the true creases to the mesh under 0.25 cell widths', async () => {
      const pts = creasePoints(1 / 256);
      // The parametrization is right: the field is 0 on every crease point.
      const vals = await field.evaluate(Float32Array.from(pts.flat()));
      for (const v of vals) expect(Math.abs(v)).toBeLessThan(1e-6);
      const cells = await sampleOctree(field, { depth: 6 });
      const h = cells.lattice.cellSize;
      const dcMesh = (await dualContour(cells, field)).mesh;
      const mcMesh = marchingCubes(cells);
      const stats = (m: MeshData) => {
        const d = distancesToMesh(m, pts, 2 * h).map((x) => x / h);
        return { max: Math.max(...d), mean: d.reduce((a, b) => a + b, 0) / d.length };
      };
      const dcd = stats(dcMesh), mcd = stats(mcMesh);
      console.log(
        `crease curves (${pts.length} points), distance to the mesh in cell widths (h = ${h.toFixed(5)} m):\n` +
          `  dual contouring: max ${dcd.max.toFixed(3)}, mean ${dcd.mean.toFixed(4)}\n  marching cubes:  max ${mcd.max.toFixed(3)}, mean ${mcd.mean.toFixed(4)}`,
      );
      // Stated bound: 0.25 h. The worst point measured (0.21 h) is where the concave notch corner line
      // ends at the cylinder side: a corner with a concave edge, which a cell's vertex can miss.
      expect(dcd.max).toBeLessThan(0.25);
      expect(dcd.mean).toBeLessThan(0.01);
      expect(mcd.max).toBeGreaterThan(2 * dcd.max); // marching cubes bevels the creases
      expectClosedManifold(dcMesh);
      expect(analyzeMesh(dcMesh).eulerCharacteristic).toBe(2);
      expect(findSelfIntersections(dcMesh)).toEqual([]);
    });
  });

  describe('sphere, torus and a genus-2 slab: topology, area, volume', () => {
    // Stated tolerance: 1% of area and volume at depth 6 (≥ 6 cells across every feature), a value
    // from common practice for meshes at this resolution. Marching cubes meets it on the smooth
    // shapes; on the slab it bevels the hole rims and box edges and loses about 4% of the area.
    const TOL = 0.01;
    const shapes: { name: string; field: Field; area: number; volume: number; chi: number; smooth: boolean }[] = [
      // Sphere r = 0.3: area 4πr², volume 4/3 πr³, χ = 2.
      { name: 'sphere', field: fnField(sphereSdf(0.3), CUBE), area: 4 * Math.PI * 0.09, volume: (4 / 3) * Math.PI * 0.027, chi: 2, smooth: true },
      // Torus R = 0.3, r = 0.1: area 4π²Rr, volume 2π²Rr², χ = 0.
      { name: 'torus', field: fnField(torusSdf(0.3, 0.1), CUBE), area: 4 * Math.PI ** 2 * 0.03, volume: 2 * Math.PI ** 2 * 0.3 * 0.01, chi: 0, smooth: true },
      // Slab 0.6 × 0.2 × 0.3 m with two through holes of radius 0.08 along its 0.2 m side, rotated:
      // volume = slab − 2πr²·0.2; area = slab − 2·2πr² (hole mouths) + 2·2πr·0.2 (hole walls); genus 2, χ = −2.
      {
        name: 'genus-2 slab',
        field: createRecipeField(
          recipe({
            type: 'difference',
            rotate: { axis: [2, 1, 1], degrees: 17 },
            children: [
              { type: 'box', size: [0.6, 0.2, 0.3] },
              { type: 'cylinder', radius: 0.08, height: 0.4, translate: [-0.15, 0, 0] },
              { type: 'cylinder', radius: 0.08, height: 0.4, translate: [0.15, 0, 0] },
            ],
          }),
          'slab',
        ),
        area: 2 * (0.6 * 0.2 + 0.6 * 0.3 + 0.2 * 0.3) - 4 * Math.PI * 0.08 ** 2 + 4 * Math.PI * 0.08 * 0.2,
        volume: 0.6 * 0.2 * 0.3 - 2 * Math.PI * 0.08 ** 2 * 0.2,
        chi: -2,
        smooth: false,
      },
    ];
    for (const s of shapes) {
      it(`${s.name}: Euler characteristic exact, area and volume within ${TOL * 100}%`, async () => {
        const cells = await sampleOctree(s.field, { depth: 6 });
        const { mesh } = await dualContour(cells, s.field);
        const r = expectClosedManifold(mesh);
        const m = analyzeMesh(marchingCubes(cells));
        const errs = { dcA: r.area / s.area - 1, dcV: r.volume / s.volume - 1, mcA: m.area / s.area - 1, mcV: m.volume / s.volume - 1 };
        console.log(
          `${s.name}, depth 6: dual contouring area ${pct(errs.dcA)}, volume ${pct(errs.dcV)}; marching cubes area ${pct(errs.mcA)}, volume ${pct(errs.mcV)}`,
        );
        expect(r.eulerCharacteristic).toBe(s.chi);
        expect(m.eulerCharacteristic).toBe(s.chi);
        expect(Math.abs(errs.dcA)).toBeLessThan(TOL);
        expect(Math.abs(errs.dcV)).toBeLessThan(TOL);
        if (s.smooth) {
          expect(Math.abs(errs.mcA)).toBeLessThan(TOL);
          expect(Math.abs(errs.mcV)).toBeLessThan(TOL);
        } else {
          expect(Math.abs(errs.mcA)).toBeGreaterThan(Math.abs(errs.dcA));
        }
        expect(findSelfIntersections(mesh)).toEqual([]);
      });
    }
  });

  describe('shared fixtures at depth 6', () => {
    const manifest = JSON.parse(readFileSync(path.join(fixtures, 'manifest.json'), 'utf8')) as {
      fixtures: { id: string; file: string; truth: { euler_characteristic: number } }[];
    };
    for (const fx of manifest.fixtures) {
      it(`${fx.file}: watertight, manifold, no self-intersections, χ = ${fx.truth.euler_characteristic} (manifest)`, async () => {
        const field = await openField(path.join(fixtures, fx.file));
        try {
          const cells = await sampleOctree(field, { depth: 6 });
          const { mesh, extraEvaluations, stats } = await dualContour(cells, field);
          const r = expectClosedManifold(mesh);
          expect(r.eulerCharacteristic).toBe(fx.truth.euler_characteristic);
          expect(findSelfIntersections(mesh)).toEqual([]);
          expect(stats.selfIntersections).toBe(0);
          expect(extraEvaluations).toBeGreaterThan(0);
          console.log(`${fx.file}: ${r.triangles} triangles, ${cells.evaluations} sampler evaluations + ${extraEvaluations} for Hermite data`);
        } finally {
          await field.dispose?.();
        }
      });
    }
  });

  describe('ambiguous cells get one vertex per surface component', () => {
    // Lattice of 4 × 4 × 4 unit cells over [0, 4]³ (depth 2). Two small spheres (r = 0.45) sit on two
    // diagonal corners of cell [1, 2]³, so that cell has exactly those two corners inside.
    async function twoBalls(c0: V3, c1: V3) {
      const f = fnField((x, y, z) => Math.min(sphereSdf(0.45, c0)(x, y, z), sphereSdf(0.45, c1)(x, y, z)), [0, 0, 0, 4, 4, 4]);
      const cells = await sampleOctree(f, { depth: 2 });
      expect(cells.lattice.cellSize).toBe(1);
      const { mesh, stats } = await dualContour(cells, f);
      const inCell = [];
      for (let v = 0; v < mesh.positions.length / 3; v++) {
        const p = vertex(mesh, v);
        if (p.every((x) => x > 1 && x < 2)) inCell.push(p);
      }
      return { mesh, stats, inCell };
    }

    it('body diagonal (corners 0 and 7): two vertices, one near each ball, and two closed pieces', async () => {
      const { mesh, stats, inCell } = await twoBalls([1, 1, 1], [2, 2, 2]);
      expect(inCell).toHaveLength(2);
      // Not one pinched vertex: one vertex on each ball's side of the cell, well apart. (Each ball
      // crosses three edges of the cell at 0.45 from its corner, with normals along the axes, so its
      // vertex is where those three tangent planes meet: 0.45 from the corner along every axis.)
      const dist = (p: V3, c: V3) => Math.hypot(p[0] - c[0], p[1] - c[1], p[2] - c[2]);
      expect(inCell.filter((p) => dist(p, [1, 1, 1]) < dist(p, [2, 2, 2]))).toHaveLength(1);
      expect(dist(inCell[0], inCell[1])).toBeGreaterThan(0.1);
      for (const p of inCell) {
        const own: V3 = dist(p, [1, 1, 1]) < dist(p, [2, 2, 2]) ? [1, 1, 1] : [2, 2, 2];
        for (let d = 0; d < 3; d++) expect(Math.abs(p[d] - own[d])).toBeCloseTo(0.45, 3);
      }
      expect(stats.multiVertexCells).toBeGreaterThanOrEqual(1);
      const r = expectClosedManifold(mesh);
      // Each ball is an octahedron-like closed piece: 2 components, χ = 2 each.
      expect(r.components).toBe(2);
      expect(r.eulerCharacteristic).toBe(4);
    });

    it('face diagonal (corners 0 and 3, face separated by the asymptotic decider): two vertices', async () => {
      // On face z = 1 the values are −0.45 at (1,1), (2,2) and 0.55 at (2,1), (1,2): the bilinear saddle
      // value (f00 f11 − f10 f01) / (f00 + f11 − f10 − f01) = (0.2025 − 0.3025) / (−2) = 0.05 > 0 is
      // outside, so the two inside corners are not joined (Nielson and Hamann 1991).
      const { mesh, inCell } = await twoBalls([1, 1, 1], [2, 2, 1]);
      expect(inCell).toHaveLength(2);
      const r = expectClosedManifold(mesh);
      expect(r.components).toBe(2);
    });
  });

  it('a face whose two segments join one loop on both sides gets a vertex per segment, and stays manifold', async () => {
    // Hand-built lattice over [0, 4]³ (unit cells, trilinear field of these node values):
    //   z = 1 and z = 3: the 2 × 2 nodes (1..2, 1..2) inside (two slabs);
    //   z = 2: (1,1) and (2,2) inside, (2,1) and (1,2) outside (+3), so face z = 2 of cells [1,2]² is ambiguous
    //   and its saddle value (1 − 9) / (−2 − 6) = 1 > 0 is outside: the segments cut off the inside corners.
    // Both cells beside that face hold a single loop through both segments (joined through their slab),
    // so the two loops' vertices would share two quad edges. The inside is a ring (slab, pillar, slab,
    // pillar): genus 1, χ = 0, as marching cubes also gives.
    const node = (i: number, j: number, k: number) => {
      const inXY = i >= 1 && i <= 2 && j >= 1 && j <= 2;
      if (inXY && (k === 1 || k === 3)) return -1;
      if (k === 2 && ((i === 1 && j === 1) || (i === 2 && j === 2))) return -1;
      if (k === 2 && ((i === 2 && j === 1) || (i === 1 && j === 2))) return 3;
      return 1;
    };
    const trilinear = (x: number, y: number, z: number) => {
      const cl = (v: number) => Math.min(3.999999, Math.max(0, v));
      const [cx, cy, cz] = [cl(x), cl(y), cl(z)];
      const i = Math.floor(cx), j = Math.floor(cy), k = Math.floor(cz);
      const fx = cx - i, fy = cy - j, fz = cz - k;
      let s = 0;
      for (let c = 0; c < 8; c++) s += node(i + (c & 1), j + ((c >> 1) & 1), k + ((c >> 2) & 1)) * (c & 1 ? fx : 1 - fx) * (c & 2 ? fy : 1 - fy) * (c & 4 ? fz : 1 - fz);
      return -s; // an occupancy logit: inside where above the level 0
    };
    const f = fnField(trilinear, [0, 0, 0, 4, 4, 4], { kind: 'occupancy', level: 0 });
    const cells = await sampleOctree(f, { depth: 2 });
    const { mesh, stats } = await dualContour(cells, f);
    expect(stats.splitFaces).toBe(1);
    const r = expectClosedManifold(mesh);
    expect(r.eulerCharacteristic).toBe(0);
    expect(analyzeMesh(marchingCubes(cells)).eulerCharacteristic).toBe(0);
    expect(findSelfIntersections(mesh)).toEqual([]);
  });

  it('a surface that leaves the bounds is capped flat on them', async () => {
    // Sphere r = 0.6 in a 1 m cube (the lattice is exactly the cube at depth 5): the part inside is the
    // sphere less 6 caps of height 0.1, volume 4/3 πr³ − 6 · πh²(3r − h)/3 (the caps do not overlap:
    // 0.5² + 0.5² > 0.6²).
    const f = fnField(sphereSdf(0.6), CUBE);
    const cells = await sampleOctree(f, { depth: 5 });
    const { mesh, stats } = await dualContour(cells, f);
    expect(stats.crossingsAtBounds).toBeGreaterThan(0);
    const r = expectClosedManifold(mesh);
    expect(r.eulerCharacteristic).toBe(2);
    const truth = (4 / 3) * Math.PI * 0.216 - 6 * ((Math.PI * 0.01 * (1.8 - 0.1)) / 3);
    expect(Math.abs(r.volume / truth - 1)).toBeLessThan(0.005);
    // The caps are flat: every vertex in the outer half cell on the +x side lies on the bound, inside
    // the cap up to the VERTEX_MARGIN (1e-3 cell widths) that keeps vertices inside their cells, on
    // the rim (where the cap's plane and the sphere's curved planes meet) within 1% of a cell; none
    // goes beyond the bound.
    const h = cells.lattice.cellSize;
    const capRadius = Math.sqrt(0.36 - 0.25);
    let onCap = 0;
    for (let v = 0; v < mesh.positions.length / 3; v++) {
      const p = vertex(mesh, v);
      expect(Math.max(...p.map(Math.abs))).toBeLessThanOrEqual(0.5 + 1e-7);
      if (p[0] > 0.5 - 0.5 * h) {
        const rim = Math.hypot(p[1], p[2]) > capRadius - 2 * h;
        expect(p[0]).toBeGreaterThan(0.5 - (rim ? 0.01 : 1.01e-3) * h);
        onCap++;
      }
    }
    expect(onCap).toBeGreaterThan(50);
  });

  it('untangles the folds plain dual contouring makes on a CSG part, and reports the count', async () => {
    // Box ∪ cylinder ∪ ball, minus a notch and a drilled hole, tilted, at depth 5: some cells see
    // creases they cannot hold, and the plain placement folds triangles through each other there.
    // The untangling pass must leave none, and say so (checked independently here).
    const field = createRecipeField(
      recipe({
        type: 'difference',
        rotate: { axis: [0.2138, -0.0233, 0.2937], degrees: 316.72 },
        children: [
          {
            type: 'union',
            children: [
              { type: 'box', size: [0.5, 0.2, 0.3] },
              { type: 'cylinder', radius: 0.1, height: 0.5, translate: [0.05, 0, 0] },
              { type: 'sphere', radius: 0.12, translate: [-0.2, 0.1, 0.1] },
            ],
          },
          { type: 'box', size: [0.3, 0.2, 0.4], translate: [0.2, 0.25, 0] },
          { type: 'cylinder', radius: 0.04, height: 1, translate: [-0.15, 0, 0], rotate: { axis: [1, 0, 0], degrees: 90 } },
        ],
      }),
      'csg',
    );
    const cells = await sampleOctree(field, { depth: 5 });
    const plain = await dualContour(cells, field, { untangle: false });
    const tangled = findSelfIntersections(plain.mesh).length / 2;
    expect(plain.stats.selfIntersections).toBe(-1);
    const fixed = await dualContour(cells, field);
    console.log(`CSG part, depth 5: ${tangled} crossing pairs without untangling, ${fixed.stats.selfIntersections} after ${fixed.stats.untangled} vertex moves`);
    expect(tangled).toBeGreaterThan(0);
    expect(fixed.stats.untangled).toBeGreaterThan(0);
    expect(fixed.stats.selfIntersections).toBe(0);
    expect(findSelfIntersections(fixed.mesh)).toEqual([]);
    const r = expectClosedManifold(fixed.mesh);
    // A genus-1 part (the drilled hole), as marching cubes also finds.
    expect(r.eulerCharacteristic).toBe(analyzeMesh(marchingCubes(cells)).eulerCharacteristic);
  });

  it('empty cells give an empty mesh; the same input gives the same bytes', async () => {
    const f = fnField(sphereSdf(0.3), CUBE);
    const empty = await sampleOctree(fnField(() => 1, CUBE), { depth: 4 });
    const e = await dualContour(empty, f);
    expect(e.mesh.positions.length).toBe(0);
    expect(e.mesh.indices.length).toBe(0);
    expect(e.extraEvaluations).toBe(0);
    const cells = await sampleOctree(f, { depth: 5 });
    const a = await dualContour(cells, f);
    const b = await dualContour(cells, f);
    expect(Buffer.from(a.mesh.positions.buffer).equals(Buffer.from(b.mesh.positions.buffer))).toBe(true);
    expect(Buffer.from(a.mesh.indices.buffer).equals(Buffer.from(b.mesh.indices.buffer))).toBe(true);
  });

  it('counts every extra evaluation', async () => {
    const f = fnField(sphereSdf(0.3), CUBE);
    const cells = await sampleOctree(f, { depth: 5 });
    f.calls = 0;
    const { extraEvaluations } = await dualContour(cells, f);
    expect(extraEvaluations).toBe(f.calls);
  });

  it('rejects misuse with the function name, and exposes its defaults', async () => {
    const f = fnField(sphereSdf(0.3), CUBE);
    const cells = await sampleOctree(f, { depth: 3 });
    await expect(dualContour(cells, f, { singularCutoff: 1 })).rejects.toThrow(/^dualContour: singularCutoff/);
    await expect(dualContour(cells, f, { diagonalTest: -1 })).rejects.toThrow(/^dualContour: diagonalTest/);
    await expect(dualContour(cells, f, { creaseReach: 2 })).rejects.toThrow(/^dualContour: creaseReach/);
    expect(DUAL_CONTOUR_DEFAULTS).toMatchObject({ rootSteps: 8, gradientStep: 0.01, singularCutoff: 0.1, creaseReach: 0.5, untangle: true });
  });
});
