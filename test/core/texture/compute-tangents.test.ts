/**
 * MikkTSpace tangents: the handedness glTF prescribes on a hand-made quad, and agreement with
 * three.js's port of Mikkelsen's reference implementation (`three/examples/jsm/libs/mikktspace.module.js`,
 * "JavaScript port of Morten S. Mikkelsen's MikkTSpace reference") on an unwrapped mesh, compared the
 * way three's `computeMikkTSpaceTangents` uses it for glTF (w negated).
 */
import * as MikkTSpace from 'three/examples/jsm/libs/mikktspace.module.js';
import * as watlas from 'watlas';
import { beforeAll, describe, expect, test } from 'vitest';
import { computeTangents } from '../../../core/texture/compute-tangents.js';
import { unwrapMesh } from '../../../core/texture/unwrap-mesh.js';
import { sampleOctree } from '../../../core/sampling/sample-octree.js';
import { marchingCubes } from '../../../core/meshing/marching-cubes.js';
import { areaWeightedNormals } from '../../../core/normals/area-weighted-normals.js';
import type { MeshData } from '../../../core/types.js';
import { fnField, torusSdf } from '../../helpers/analytic-fields.js';

/**
 * A unit quad in the z = 0 plane, normal +z, seen from +z:
 *
 *   (0,1) 3 ---- 2 (1,1)      UV (glTF): u grows with x; v grows DOWN the image, so the top of
 *         |   / |             the image (v = 0) is at y = 1.
 *   (0,0) 0 ---- 1 (1,0)
 */
function quad(mirrored: boolean) {
  const positions = new Float32Array([0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0]);
  const normals = new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1]);
  const u = (x: number) => (mirrored ? 1 - x : x);
  const uvs = new Float32Array([u(0), 1, u(1), 1, u(1), 0, u(0), 0]);
  return { positions, normals, uvs, indices: new Uint32Array([0, 1, 2, 0, 2, 3]) };
}

describe('glTF handedness', () => {
  test('u along +x, image up along +y: tangent +x, w = +1 so that cross(N, T)·w points up the image', () => {
    const q = quad(false);
    const t = computeTangents(q.positions, q.normals, q.uvs, q.indices);
    for (let v = 0; v < 4; v++) {
      // glTF 2.0 spec, meshes: bitangent = cross(normal, tangent.xyz) * w; normal textures: "+Y is up" (in the image).
      // cross((0,0,1), (1,0,0)) = (0,1,0), which is up the image here, so w = +1.
      expect(Array.from(t.subarray(4 * v, 4 * v + 4))).toEqual([1, 0, 0, 1]);
    }
  });

  test('the mirrored layout (u along −x) gives tangent −x and w = −1: the bitangent still points up the image', () => {
    const q = quad(true);
    const t = computeTangents(q.positions, q.normals, q.uvs, q.indices);
    for (let v = 0; v < 4; v++) {
      // cross((0,0,1), (−1,0,0)) = (0,−1,0); times w = −1 gives +y, up the image.
      expect(t[4 * v]).toBeCloseTo(-1, 12);
      expect(t[4 * v + 3]).toBe(-1);
    }
  });
});

describe('against the MikkTSpace reference', () => {
  let mesh: MeshData;
  let uvs: Float32Array;
  beforeAll(async () => {
    await watlas.Initialize();
    const m = marchingCubes(await sampleOctree(fnField(torusSdf(0.6, 0.25), [-1, -0.4, -1, 1, 0.4, 1]), { depth: 5, level: 0 }));
    m.normals = areaWeightedNormals(m.positions, m.indices);
    const u = unwrapMesh(m, watlas, { size: 512 });
    expect(u.mirroredSplits).toBe(0);
    mesh = u.mesh;
    uvs = u.uvs;
  });

  test('per-vertex tangents match the reference within 0.1° at every corner (0.02° on average), with the same handedness', () => {
    const ours = computeTangents(mesh.positions, mesh.normals!, uvs, mesh.indices);
    // The reference takes unindexed corners (three's computeMikkTSpaceTangents does toNonIndexed() first).
    const n = mesh.indices.length;
    const P = new Float32Array(3 * n), N = new Float32Array(3 * n), T = new Float32Array(2 * n);
    for (let c = 0; c < n; c++) {
      const v = mesh.indices[c];
      P.set(mesh.positions.subarray(3 * v, 3 * v + 3), 3 * c);
      N.set(mesh.normals!.subarray(3 * v, 3 * v + 3), 3 * c);
      T.set(uvs.subarray(2 * v, 2 * v + 2), 2 * c);
    }
    const ref = MikkTSpace.generateTangents(P, N, T);
    let worst = 0, sum = 0;
    for (let c = 0; c < n; c++) {
      const v = mesh.indices[c];
      const dot = ours[4 * v] * ref[4 * c] + ours[4 * v + 1] * ref[4 * c + 1] + ours[4 * v + 2] * ref[4 * c + 2];
      const deg = (Math.acos(Math.min(1, dot)) * 180) / Math.PI;
      worst = Math.max(worst, deg);
      sum += deg;
      // three's computeMikkTSpaceTangents negates w for glTF's UV convention (its negateSign default).
      expect(ours[4 * v + 3], `corner ${c}`).toBe(-ref[4 * c + 3]);
    }
    // The reference computes in float32, we in float64. Measured: max 0.031°, mean 0.007°; moving our
    // own inputs by one float32 ulp (relative 6e-8, random) moves our tangents by max 0.027°, mean
    // 0.005°, so the difference is the reference's float32 rounding.
    expect(worst).toBeLessThan(0.1);
    expect(sum / n).toBeLessThan(0.02);
  });

  test('tangents are unit length and perpendicular to the normals', () => {
    const t = computeTangents(mesh.positions, mesh.normals!, uvs, mesh.indices);
    for (let v = 0; v < t.length / 4; v++) {
      const n = mesh.normals!.subarray(3 * v, 3 * v + 3);
      expect(Math.hypot(t[4 * v], t[4 * v + 1], t[4 * v + 2])).toBeCloseTo(1, 5);
      expect(Math.abs(n[0] * t[4 * v] + n[1] * t[4 * v + 1] + n[2] * t[4 * v + 2])).toBeLessThan(1e-5);
    }
  });
});

test('wrong array lengths are misuse', () => {
  const q = quad(false);
  expect(() => computeTangents(q.positions, q.normals, q.uvs.subarray(0, 6), q.indices)).toThrow(/computeTangents: uvs/);
});
