/**
 * UV layout with watlas (xatlas): the same triangles, UVs inside the square, charts that do not
 * overlap (their UV area equals the texels they cover), little stretch (Sander et al. 2001), the
 * padding it states, and a split mesh that welds back to the closed input.
 */
import * as watlas from 'watlas';
import { beforeAll, describe, expect, test } from 'vitest';
import { unwrapMesh } from '../../../core/texture/unwrap-mesh.js';
import { measureUvStretch } from '../../../core/texture/measure-uv-stretch.js';
import { rasterizeAtlas } from '../../../core/texture/rasterize-atlas.js';
import { sampleOctree } from '../../../core/sampling/sample-octree.js';
import { marchingCubes } from '../../../core/meshing/marching-cubes.js';
import { areaWeightedNormals } from '../../../core/normals/area-weighted-normals.js';
import { weldExact } from '../../../core/import/weld-exact.js';
import type { MeshData } from '../../../core/types.js';
import { fnField, torusSdf } from '../../helpers/analytic-fields.js';
import { expectMesh } from '../../helpers/expect-mesh.js';

let torus: MeshData;
beforeAll(async () => {
  await watlas.Initialize();
  torus = marchingCubes(await sampleOctree(fnField(torusSdf(0.6, 0.25), [-1, -0.4, -1, 1, 0.4, 1]), { depth: 5, level: 0 }));
  torus.normals = areaWeightedNormals(torus.positions, torus.indices);
  torus.colors = new Float32Array(torus.positions.length).fill(0.5);
});

describe('unwrapMesh on a torus', () => {
  test('same triangles in the same order, attributes copied bit for bit from the source vertex', () => {
    const u = unwrapMesh(torus, watlas, { size: 512 });
    expect(u.mesh.indices.length).toBe(torus.indices.length);
    expect(u.xref.length).toBe(u.mesh.positions.length / 3);
    for (let t = 0; t < torus.indices.length; t++) {
      const v = u.mesh.indices[t];
      // The triangle's corner t names the same source vertex as before.
      expect(u.xref[v]).toBe(torus.indices[t]);
    }
    for (let v = 0; v < u.xref.length; v++) {
      for (let k = 0; k < 3; k++) {
        expect(u.mesh.positions[3 * v + k]).toBe(torus.positions[3 * u.xref[v] + k]);
        expect(u.mesh.normals![3 * v + k]).toBe(torus.normals![3 * u.xref[v] + k]);
      }
    }
    expect(u.mesh.colors).toBeDefined();
  });

  test('welding the split vertices by exact position gives back the closed genus-1 torus', () => {
    const u = unwrapMesh(torus, watlas, { size: 512 });
    expect(u.mesh.positions.length).toBeGreaterThan(torus.positions.length); // seams split vertices
    expectMesh(weldExact({ positions: u.mesh.positions, indices: u.mesh.indices }), { components: 1, genus: 1 });
  });

  test('UVs lie in the square, charts do not overlap, and the stated padding holds', () => {
    const size = 512;
    const u = unwrapMesh(torus, watlas, { size });
    for (const x of u.uvs) {
      expect(x).toBeGreaterThanOrEqual(0);
      expect(x).toBeLessThanOrEqual(1);
    }
    // Non-overlap: the texels whose centres fall in some triangle equal the UV area (up to edge rounding).
    let area = 0;
    const { uvs, mesh } = u;
    for (let t = 0; t < mesh.indices.length; t += 3) {
      const a = mesh.indices[t], b = mesh.indices[t + 1], c = mesh.indices[t + 2];
      area += Math.abs((uvs[2 * b] - uvs[2 * a]) * (uvs[2 * c + 1] - uvs[2 * a + 1]) - (uvs[2 * c] - uvs[2 * a]) * (uvs[2 * b + 1] - uvs[2 * a + 1])) / 2;
    }
    const raster = rasterizeAtlas(uvs, mesh.indices, size);
    expect(Math.abs(raster.covered / (size * size) - area)).toBeLessThan(0.01 * area);
    // Padding asked: 512 / 256 = 2 texels (UNWRAP_DEFAULTS); scaling to the square keeps at least 90% of it.
    expect(u.padding).toBeGreaterThanOrEqual(1.8);
    expect(u.charts).toBeGreaterThan(1);
    expect(u.mirroredSplits).toBe(0);
  });

  test('stretch is small: Sander et al. L2 within 10% of none', () => {
    const u = unwrapMesh(torus, watlas, { size: 512 });
    const s = measureUvStretch(u.mesh.positions, u.uvs, u.mesh.indices);
    // Our threshold for "little stretch"; 1.0 is an isometry up to scale (Sander et al. 2001).
    expect(s.l2).toBeGreaterThanOrEqual(1);
    expect(s.l2).toBeLessThan(1.1);
    expect(s.zeroUvArea).toBe(0);
  });

  test('the same mesh gives the same layout', () => {
    const a = unwrapMesh(torus, watlas, { size: 256 });
    const b = unwrapMesh(torus, watlas, { size: 256 });
    expect(Buffer.from(a.uvs.buffer).equals(Buffer.from(b.uvs.buffer))).toBe(true);
  });
});

test('misuse throws with the function name', () => {
  expect(() => unwrapMesh(torus, watlas, { size: 4 })).toThrow(/unwrapMesh: size/);
  expect(() => unwrapMesh(torus, {} as never, { size: 256 })).toThrow(/unwrapMesh: atlasModule/);
  expect(() => unwrapMesh({ positions: new Float32Array(9), indices: new Uint32Array(0) }, watlas, { size: 256 })).toThrow(/unwrapMesh: the mesh/);
});
