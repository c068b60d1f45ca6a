/**
 * Tests for findHermiteData (core/meshing/hermite-data.ts), checked against analytic fields: on a
 * sphere the crossing of every edge is the analytic root and the normal is the radial direction.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { findHermiteData, type HermiteData } from '../../../core/meshing/hermite-data.js';
import { sampleOctree, type SurfaceCells } from '../../../core/sampling/sample-octree.js';
import { fnField, sphereSdf } from '../../helpers/analytic-fields.js';

const B = [-0.5, -0.5, -0.5, 0.5, 0.5, 0.5] as [number, number, number, number, number, number];

describe('findHermiteData', () => {
  const sphere = fnField(sphereSdf(0.3), B);
  let cells: SurfaceCells;
  let herm: HermiteData;
  beforeAll(async () => {
    cells = await sampleOctree(sphere, { depth: 5 });
    sphere.calls = 0;
    herm = await findHermiteData(cells, sphere);
  });

  it('finds each sign-changing edge once, with the crossing on the sphere and the radial normal', () => {
    const h = cells.lattice.cellSize;
    expect(herm.count).toBeGreaterThan(1000);
    expect(herm.index.size).toBe(herm.count);
    let worstDist = 0;
    let worstAngle = 0;
    for (let x = 0; x < herm.count; x++) {
      const p = [herm.points[3 * x], herm.points[3 * x + 1], herm.points[3 * x + 2]];
      const r = Math.hypot(p[0], p[1], p[2]);
      worstDist = Math.max(worstDist, Math.abs(r - 0.3));
      const dotp = (herm.normals[3 * x] * p[0] + herm.normals[3 * x + 1] * p[1] + herm.normals[3 * x + 2] * p[2]) / r;
      worstAngle = Math.max(worstAngle, Math.acos(Math.min(1, dotp)));
    }
    // Root finding stops at 1e-5 of the value change along the edge (ROOT_TOLERANCE): about 1e-5 h.
    expect(worstDist).toBeLessThan(1e-4 * h);
    // Central differences of |p| with step 0.01 h: error O(δ²/r²), far below 0.01°.
    expect((worstAngle * 180) / Math.PI).toBeLessThan(0.01);
  });

  it('counts every evaluation it makes, and 6 per crossing are the gradients', () => {
    expect(herm.extraEvaluations).toBe(sphere.calls);
    expect(herm.extraEvaluations).toBeGreaterThanOrEqual(7 * herm.count); // ≥ 1 root step + 6 gradient points each
    expect(herm.extraEvaluations).toBeLessThan(10 * herm.count); // most edges converge in 1–2 steps on a smooth field
  });

  it('gives the same answer whatever the batch size', async () => {
    const small = await findHermiteData(cells, sphere, { batchSize: 1000 });
    expect(small.points).toEqual(herm.points);
    expect(small.normals).toEqual(herm.normals);
  });

  it('for a density field, normals still point outside (toward lower density)', async () => {
    // density = 10 − 20·sdf, level 10: the same sphere, inside where density is above the level.
    const dens = fnField((x, y, z) => 10 - 20 * sphereSdf(0.3)(x, y, z), B, { kind: 'density', level: 10 });
    const c = await sampleOctree(dens, { depth: 4 });
    const d = await findHermiteData(c, dens);
    for (let x = 0; x < d.count; x++) {
      const p = [d.points[3 * x], d.points[3 * x + 1], d.points[3 * x + 2]];
      expect(d.normals[3 * x] * p[0] + d.normals[3 * x + 1] * p[1] + d.normals[3 * x + 2] * p[2]).toBeGreaterThan(0.29);
    }
  });

  it('puts crossings to forced outer nodes on the bounds, with the outward axis normal', async () => {
    // A sphere of radius 0.6 in a 1 m cube leaves the bounds; the sampler forces the outer layer outside.
    const big = fnField(sphereSdf(0.6), B);
    const c = await sampleOctree(big, { depth: 4 });
    const d = await findHermiteData(c, big);
    expect(d.atBounds).toBeGreaterThan(0);
    let seen = 0;
    for (let x = 0; x < d.count; x++) {
      for (let a = 0; a < 3; a++) {
        if (Math.abs(Math.abs(d.points[3 * x + a]) - 0.5) < 1e-12 && Math.abs(d.normals[3 * x + a]) === 1) {
          expect(Math.sign(d.normals[3 * x + a])).toBe(Math.sign(d.points[3 * x + a]));
          seen++;
        }
      }
    }
    expect(seen).toBe(d.atBounds);
  });

  it('a field that returns NaN near the surface does not throw; it is counted and the normal falls back', async () => {
    let calls = 0;
    const nanny = fnField((x, y, z) => (++calls > 0 && x > 0.25 && Math.abs(Math.hypot(x, y, z) - 0.3) < 0.02 ? NaN : sphereSdf(0.3)(x, y, z)), B);
    const c = await sampleOctree(sphere, { depth: 4 });
    const d = await findHermiteData(c, nanny);
    expect(d.nonFinite).toBeGreaterThan(0);
    for (let x = 0; x < d.count; x++) expect(Math.hypot(d.normals[3 * x], d.normals[3 * x + 1], d.normals[3 * x + 2])).toBeCloseTo(1, 9);
  });

  it('rejects misuse', async () => {
    await expect(findHermiteData(cells, sphere, { rootSteps: -1 })).rejects.toThrow(/^findHermiteData: rootSteps/);
    await expect(findHermiteData(cells, sphere, { gradientStep: 0 })).rejects.toThrow(/gradientStep/);
    await expect(findHermiteData({ ...cells, count: cells.count + 1 }, sphere)).rejects.toThrow(/findHermiteData: cells/);
  });
});
