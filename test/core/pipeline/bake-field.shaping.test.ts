/**
 * The game-ready stages of bakeField: cleanup → field normals → decimation to the budget → LODs →
 * color baking → checks → export, through the report keys the CLI promises.
 */
import { describe, expect, test } from 'vitest';
import { bakeField } from '../../../core/pipeline/bake-field.js';
import { readGltfMeshes } from '../../../core/import/read-gltf-meshes.js';
import { analyzeMesh } from '../../../core/checks/analyze-mesh.js';
import type { Bounds } from '../../../core/types.js';
import { fnField, sphereSdf, torusSdf } from '../../helpers/analytic-fields.js';
import { resolve } from 'node:path';
import { openField } from '../../../app/fields/open-field.js';
import { REPO_ROOT } from '../../helpers/fixtures.js';
import { fieldGradientNormals } from '../../../core/normals/field-gradient-normals.js';

const TORUS_BOUNDS: Bounds = [-1, -0.4, -1, 1, 0.4, 1];
const torus = () => fnField(torusSdf(0.6, 0.2), TORUS_BOUNDS, { color: (_x, y) => [0.5 + y, 0.3, 0.2], name: 'torus' });

describe('bakeField: budget, LODs, colors, checks', () => {
  test('a budget and two LODs: each level checked and reported, colors baked on the final vertices', async () => {
    const r = await bakeField(torus(), { depth: 6, budget: 4000, lods: 2 });
    const rep = r.report;
    expect(rep.decimation.targetTriangles).toBe(4000);
    expect(rep.decimation.triangles).toBe(r.mesh.indices.length / 3);
    expect(rep.decimation.triangles).toBeLessThanOrEqual(4000);
    expect(rep.decimation.inputTriangles).toBeGreaterThan(4000);
    expect(rep.decimation.maxError).toBeGreaterThan(0);
    expect(rep.decimation.maxError).toBeLessThan(0.01); // a 4 000-triangle torus of 4.7 m² strays millimetres, not centimetres
    expect(rep.lods.map((l) => l.level)).toEqual([1, 2]);
    expect(rep.lods[0].triangles).toBeLessThanOrEqual(Math.floor(rep.decimation.triangles / 2));
    expect(rep.lods[1].triangles).toBeLessThanOrEqual(Math.floor(rep.lods[0].triangles / 2));
    expect(rep.lods.every((l) => l.watertight && l.genus === 1)).toBe(true);
    expect(rep.lods[1].maxError).toBeGreaterThan(rep.lods[0].maxError);
    expect(rep.mesh.watertight).toBe(true);
    expect(rep.mesh.genus).toBe(1);
    expect(rep.checks.every((c) => c.ok)).toBe(true);
    expect(rep.checks.map((c) => c.name)).toContain('vertex-manifold');
    for (const k of ['sample', 'extract', 'cleanup', 'normals', 'decimate', 'bake', 'color', 'check', 'export', 'total']) expect(rep.timings[k], k).toBeTypeOf('number');
    expect(rep.normals.method).toBe('field');
    expect(rep.colors.baked).toBe(true);
    // Each final vertex carries the field's color at its own position, or an average around it.
    for (let v = 0; v < 30; v++) expect(r.mesh.colors![3 * v + 1]).toBeCloseTo(0.3, 6);
    expect(r.lods).toHaveLength(2);
    expect(r.lods.every((l) => l.colors && l.normals)).toBe(true);
    // The GLB holds all three levels.
    const parts = await readGltfMeshes(r.glb!);
    expect(parts.map((p) => p.mesh.indices.length / 3)).toEqual([rep.decimation.triangles, rep.lods[0].triangles, rep.lods[1].triangles]);
  });

  test('a costly field with a budget: the lattice\'s normals guide decimation, and only the base level\'s vertices are sent to the field', async () => {
    const costly = fnField(torusSdf(0.6, 0.2), TORUS_BOUNDS, { costly: true });
    const r = await bakeField(costly, { depth: 6, budget: 3000, lods: 1 });
    const rep = r.report;
    const baseVertices = r.mesh.positions.length / 3;
    expect(rep.normals.guide).toBe('lattice');
    expect(rep.normals.evaluations).toBe(6 * baseVertices);
    expect(rep.decimation.inputTriangles).toBeGreaterThan(4 * rep.decimation.triangles);
    // The base level's normals are exactly the field's at its vertices (same stencil and step).
    const own = await fieldGradientNormals(costly, r.mesh.positions, r.mesh.indices, { step: rep.normals.step! });
    expect(Array.from(r.mesh.normals!)).toEqual(Array.from(own.normals));
    // And an analytic check: the torus's true normal, within 0.5° (central differences, O(h²)).
    const [R] = [0.6];
    for (let v = 0; v < baseVertices; v++) {
      const [x, y, z] = [0, 1, 2].map((k) => r.mesh.positions[3 * v + k]);
      const q = Math.hypot(x, z);
      const c = [x - (R * x) / q, y, z - (R * z) / q]; // from the tube's centre circle
      const len = Math.hypot(...c);
      const dot = (c[0] * r.mesh.normals![3 * v] + c[1] * r.mesh.normals![3 * v + 1] + c[2] * r.mesh.normals![3 * v + 2]) / len;
      expect(dot).toBeGreaterThan(Math.cos((0.5 * Math.PI) / 180));
    }
    // The LOD keeps a subset of the base level's vertices, with their normals.
    const byPosition = new Map<string, string>();
    for (let v = 0; v < baseVertices; v++) byPosition.set(Array.from(r.mesh.positions.subarray(3 * v, 3 * v + 3)).join(), Array.from(r.mesh.normals!.subarray(3 * v, 3 * v + 3)).join());
    const lod = r.lods[0];
    for (let v = 0; v < lod.positions.length / 3; v++) {
      expect(byPosition.get(Array.from(lod.positions.subarray(3 * v, 3 * v + 3)).join())).toBe(Array.from(lod.normals!.subarray(3 * v, 3 * v + 3)).join());
    }
    expect(rep.mesh.watertight).toBe(true);
    expect(rep.checks.every((c) => c.ok)).toBe(true);

    // The same field, not declared costly: every vertex of the full mesh gets the field's normal (a closed
    // genus-1 mesh has V = T/2 vertices, Euler's formula).
    const cheap = await bakeField(fnField(torusSdf(0.6, 0.2), TORUS_BOUNDS), { depth: 6, budget: 3000, lods: 1 });
    expect(cheap.report.normals.guide).toBe('field');
    expect(cheap.report.normals.evaluations).toBe(6 * (cheap.report.decimation.inputTriangles / 2));

    // Dual contouring has no lattice normals: a costly field's full mesh then gets the field's normals.
    const dc = await bakeField(fnField(torusSdf(0.6, 0.2), TORUS_BOUNDS, { costly: true }), { depth: 5, budget: 1000, method: 'dual-contouring' });
    expect(dc.report.normals.guide).toBe('field');
    expect(dc.report.normals.evaluations).toBeGreaterThan(6 * (dc.mesh.positions.length / 3));
  });

  test('identical inputs and options give byte-identical GLBs', async () => {
    const a = await bakeField(torus(), { depth: 5, budget: 1500, lods: 1, provenance: { file: 't.json' } });
    const b = await bakeField(torus(), { depth: 5, budget: 1500, lods: 1, provenance: { file: 't.json' } });
    expect(Buffer.from(a.glb!).equals(Buffer.from(b.glb!))).toBe(true);
    const c = await bakeField(torus(), { depth: 5, budget: 1500, lods: 1, meshopt: true, provenance: { file: 't.json' } });
    const d = await bakeField(torus(), { depth: 5, budget: 1500, lods: 1, meshopt: true, provenance: { file: 't.json' } });
    expect(Buffer.from(c.glb!).equals(Buffer.from(d.glb!))).toBe(true);
  });

  test('without a budget nothing is decimated and the report says so', async () => {
    const r = await bakeField(torus(), { depth: 5 });
    expect(r.report.decimation).toMatchObject({ targetTriangles: null, maxError: 0, attempts: 0 });
    expect(r.report.decimation.triangles).toBe(r.report.mesh.triangles);
    expect(r.report.lods).toEqual([]);
    expect(r.report.timings.decimate).toBeUndefined();
  });

  test('--normals mesh uses area-weighted normals; PLY output keeps only the base level and says so', async () => {
    const r = await bakeField(torus(), { depth: 5, lods: 1, normals: 'mesh', format: 'ply' });
    expect(r.report.normals).toEqual({ method: 'mesh', fallbackVertices: 0, step: null, evaluations: 0, guide: 'mesh' });
    expect(r.format).toBe('ply');
    expect(r.glb).toBeUndefined();
    expect(new TextDecoder().decode(r.bytes!.subarray(0, 3))).toBe('ply');
    expect(r.report.warnings.join(' ')).toMatch(/LODs are written only to glTF and GLB files/);
  });
});

describe('bakeField: cleanup', () => {
  // A main sphere of radius 0.4 and a floater of radius 0.03 (area ratio 0.03²/0.4² = 0.56%).
  const twoSpheres = () => {
    const a = sphereSdf(0.4, [-0.2, 0, 0]);
    const b = sphereSdf(0.03, [0.6, 0, 0]);
    return fnField((x, y, z) => Math.min(a(x, y, z), b(x, y, z)), [-0.7, -0.5, -0.5, 0.7, 0.5, 0.5]);
  };

  test('by default small parts are kept with a warning naming --min-part', async () => {
    const r = await bakeField(twoSpheres(), { depth: 6 });
    expect(r.report.mesh.components).toBe(2);
    expect(r.report.cleanup.smallParts.parts).toBe(0);
    expect(r.report.warnings.join(' ')).toMatch(/1 small part\(s\) under 1% of the largest part's area.*--min-part 0.01/);
  });

  test('--min-part drops the floater and reports what was removed', async () => {
    const r = await bakeField(twoSpheres(), { depth: 6, minPart: 0.01 });
    expect(r.report.mesh.components).toBe(1);
    expect(r.report.cleanup.minPart).toBe(0.01);
    expect(r.report.cleanup.smallParts.parts).toBe(1);
    expect(r.report.cleanup.smallParts.triangles).toBeGreaterThan(0);
    // The floater's area: 4π·0.03² ≈ 0.0113 m² (marching cubes at this coarse cell comes within a few per cent).
    expect(r.report.cleanup.smallParts.area).toBeCloseTo(4 * Math.PI * 0.03 ** 2, 2);
    expect(analyzeMesh(r.mesh).components).toBe(1);
    expect(r.report.cleanup.degenerateTriangles.remaining).toBe(0);
  });

  test('bad shaping options are refused with the option named', async () => {
    await expect(bakeField(torus(), { depth: 4, budget: 2 })).rejects.toThrow(/budget must be 0 \(none\) or a whole number of triangles ≥ 4/);
    await expect(bakeField(torus(), { depth: 4, minPart: 2 })).rejects.toThrow(/minPart must be a fraction from 0 to 1/);
    await expect(bakeField(torus(), { depth: 4, format: 'fbx' as never })).rejects.toThrow(/unknown output format 'fbx'/);
  });
});

describe('bakeField: a field steeper than the gradient bound', () => {
  test('a warning that names the measured slope and a safer --lipschitz', async () => {
    // 1.6(|p| − r): gradient norm 1.6 everywhere (analytic), pruned with the bound 1.
    const sd = sphereSdf(0.4);
    const field = fnField((x, y, z) => 1.6 * sd(x, y, z), [-0.6, -0.6, -0.6, 0.6, 0.6, 0.6], { lipschitz: 1 });
    const r = await bakeField(field, { depth: 6, skipExport: true });
    expect(r.report.warnings.join(' ')).toMatch(/changes faster than the gradient bound .*\(1\.\d+ against 1, .*pass --lipschitz 2/);
    const exact = await bakeField(fnField(sd, field.bounds, { lipschitz: 1 }), { depth: 6, skipExport: true });
    expect(exact.report.warnings.join(' ')).not.toMatch(/changes faster/);
    // The demo recipes are exact distance fields (bound 1) that measure 1.00001 from float32 rounding: no warning.
    const stool = await openField(resolve(REPO_ROOT, 'assets/demo/round-stool.recipe.json'));
    const r2 = await bakeField(stool, { depth: 7, skipExport: true });
    await stool.dispose?.();
    expect(r2.report.sampling.steepestEdgeSlope).toBeGreaterThan(0.99);
    expect(r2.report.warnings.join(' ')).not.toMatch(/changes faster/);
  });
  test('when the bound prunes the whole surface away, the no-surface error says which bound', async () => {
    const sd = sphereSdf(0.4);
    const field = fnField((x, y, z) => 40 * sd(x, y, z), [-0.6, -0.6, -0.6, 0.6, 0.6, 0.6], { lipschitz: 1 });
    await expect(bakeField(field, { depth: 6, skipExport: true })).rejects.toThrow(/no surface: .*steeper than the gradient bound used to skip empty space \(1\), pass a larger --lipschitz/);
  });
});
