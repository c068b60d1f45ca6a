/** The readers behind `fieldkiln check`: what Fieldkiln writes comes back with the same topology, and bad bytes get a clear error. */
import { beforeAll, describe, expect, test } from 'vitest';
import { readMeshFile } from '../../../core/import/read-mesh-file.js';
import { readPly } from '../../../core/import/read-ply.js';
import { readStl } from '../../../core/import/read-stl.js';
import { readObj } from '../../../core/import/read-obj.js';
import { readGltfMeshes } from '../../../core/import/read-gltf-meshes.js';
import { exportMesh, EXPORT_FORMATS } from '../../../core/export/export-mesh.js';
import { analyzeMesh } from '../../../core/checks/analyze-mesh.js';
import { buildLods } from '../../../core/decimate/build-lods.js';
import { sampleOctree } from '../../../core/sampling/sample-octree.js';
import { marchingCubes } from '../../../core/meshing/marching-cubes.js';
import { areaWeightedNormals } from '../../../core/normals/area-weighted-normals.js';
import { FieldkilnError, type MeshData } from '../../../core/types.js';
import { fnField, torusSdf } from '../../helpers/analytic-fields.js';

let m: MeshData;
beforeAll(async () => {
  m = marchingCubes(await sampleOctree(fnField(torusSdf(0.6, 0.2), [-1, -0.4, -1, 1, 0.4, 1]), { depth: 4, level: 0 }));
  m.normals = areaWeightedNormals(m.positions, m.indices);
  m.colors = new Float32Array(m.positions.length).fill(0.5);
});
const text = (s: string) => new TextEncoder().encode(s);

describe('readMeshFile', () => {
  for (const format of EXPORT_FORMATS) {
    test(`${format}: what Fieldkiln writes reads back with the same vertex and triangle counts and topology`, async () => {
      const parts = await readMeshFile(format, await exportMesh(format, m));
      expect(parts).toHaveLength(1);
      const back = parts[0].mesh;
      expect(back.positions.length / 3).toBe(m.positions.length / 3); // STL's per-triangle corners weld back exactly
      expect(back.indices.length).toBe(m.indices.length);
      const a = analyzeMesh(back), b = analyzeMesh(m);
      expect([a.watertight, a.eulerCharacteristic, a.genus]).toEqual([true, b.eulerCharacteristic, 1]);
      expect(a.volume).toBeCloseTo(b.volume, 5);
    });
  }

  test('glTF with LODs, quantized and meshopt-compressed: one mesh per node, in metres', async () => {
    const lods = (await buildLods(m, m, 1)).map((l) => l.mesh);
    const parts = await readGltfMeshes(await exportMesh('glb', m, { lods, meshopt: true, name: 'ring' }));
    expect(parts.map((p) => p.name)).toEqual(['ring_LOD0', 'ring_LOD1']);
    expect(parts.map((p) => p.mesh.indices.length)).toEqual([m.indices.length, lods[0].indices.length]);
    // Quantized to 2^-15 of the half extent (1 m here): volumes agree to about 1e-4 relative.
    expect(analyzeMesh(parts[0].mesh).volume).toBeCloseTo(analyzeMesh(m).volume, 3);
  });

  test('ASCII PLY with a quad, ASCII STL, and OBJ with a quad and negative indices', () => {
    const ply = readPly(text('ply\nformat ascii 1.0\nelement vertex 4\nproperty float x\nproperty float y\nproperty float z\nelement face 1\nproperty list uchar int vertex_indices\nend_header\n0 0 0\n1 0 0\n1 1 0\n0 1 0\n4 0 1 2 3\n'));
    expect([...ply.indices]).toEqual([0, 1, 2, 0, 2, 3]);
    const stl = readStl(text('solid t\nfacet normal 0 0 1\nouter loop\nvertex 0 0 0\nvertex 1 0 0\nvertex 0 1 0\nendloop\nendfacet\nendsolid t\n'));
    expect(stl.positions.length).toBe(9);
    const obj = readObj(text('v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\nf -4 -3 -2 -1\n'));
    expect([...obj.indices]).toEqual([0, 1, 2, 0, 2, 3]);
  });

  const bad: [string, () => unknown, RegExp][] = [
    ['PLY without a header end', () => readPly(text('ply\nformat ascii 1.0\n')), /PLY: no 'end_header'/],
    ['PLY whose face names a missing vertex', () => readPly(text('ply\nformat ascii 1.0\nelement vertex 1\nproperty float x\nproperty float y\nproperty float z\nelement face 1\nproperty list uchar int vertex_indices\nend_header\n0 0 0\n3 0 1 2\n')), /face 0 names vertex 1/],
    ['PLY cut short', () => readPly(text('ply\nformat binary_little_endian 1.0\nelement vertex 2\nproperty float x\nproperty float y\nproperty float z\nend_header\n\u0000\u0000')), /data ends/],
    ['STL that is neither binary nor ASCII', () => readStl(new Uint8Array(100).fill(7)), /STL: not a binary STL/],
    ['OBJ face naming vertex 9 of 3', () => readObj(text('v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 9\n')), /OBJ line 4: face corner '9'/],
    ['OBJ vertex that is not a number', () => readObj(text('v 0 zero 0\n')), /OBJ line 1: a vertex wants three numbers/],
  ];
  for (const [name, read, pattern] of bad) {
    test(`bad input: ${name}`, () => {
      expect(read).toThrow(FieldkilnError);
      expect(read).toThrow(pattern);
    });
  }

  test('bad input: bytes that are not glTF', async () => {
    await expect(readGltfMeshes(new Uint8Array([1, 2, 3, 4]))).rejects.toThrow(/glTF: could not read the file/);
    await expect(readGltfMeshes(text('{"asset":{"version":"2.0"},"buffers":[{"uri":"missing.bin","byteLength":4}]}'))).rejects.toThrow(/buffer 'missing.bin' was not found/);
  });
});
