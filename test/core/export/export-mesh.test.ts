/**
 * PLY (binary, with colors), STL (binary) and OBJ: each read back by three's matching loader
 * (three/examples/jsm/loaders) with the same counts, positions and colors; the format follows the
 * file extension.
 */
import * as THREE from 'three';
import { PLYLoader } from 'three/examples/jsm/loaders/PLYLoader.js';
import { STLLoader } from 'three/examples/jsm/loaders/STLLoader.js';
import { OBJLoader } from 'three/examples/jsm/loaders/OBJLoader.js';
import { beforeAll, describe, expect, test } from 'vitest';
import { exportMesh, formatFromExtension, EXPORT_FORMATS } from '../../../core/export/export-mesh.js';
import { sampleOctree } from '../../../core/sampling/sample-octree.js';
import { marchingCubes } from '../../../core/meshing/marching-cubes.js';
import { areaWeightedNormals } from '../../../core/normals/area-weighted-normals.js';
import type { MeshData } from '../../../core/types.js';
import { fnField, sphereSdf } from '../../helpers/analytic-fields.js';

let m: MeshData;
beforeAll(async () => {
  m = marchingCubes(await sampleOctree(fnField(sphereSdf(0.5), [-0.75, -0.75, -0.75, 0.75, 0.75, 0.75]), { depth: 4, level: 0 }));
  m.normals = areaWeightedNormals(m.positions, m.indices);
  // Linear colors from the height, as the sphere fixture's gradient (manifest sphere_sdf color) would give.
  m.colors = new Float32Array(m.positions.length);
  for (let v = 0; v < m.positions.length / 3; v++) {
    const s = m.positions[3 * v + 1] + 0.5;
    m.colors.set([0.1 + 0.85 * s, 0.25 + 0.3 * s, 0.85 - 0.75 * s], 3 * v);
  }
});
const V = () => m.positions.length / 3;
const T = () => m.indices.length / 3;
const ab = (u: Uint8Array) => u.buffer.slice(u.byteOffset, u.byteOffset + u.byteLength) as ArrayBuffer;

describe('exportMesh: PLY, STL, OBJ read back by three', () => {
  test('PLY (binary little-endian): PLYLoader reads every vertex, triangle, normal and color', async () => {
    const bytes = await exportMesh('ply', m, { extras: { source: { file: 'ball.onnx' } } });
    expect(new TextDecoder().decode(bytes.subarray(0, 40))).toMatch(/^ply\nformat binary_little_endian 1\.0\n/);
    const g = new PLYLoader().parse(ab(bytes));
    expect(g.attributes.position.count).toBe(V());
    expect(g.index!.count).toBe(3 * T());
    expect(g.attributes.normal.count).toBe(V());
    for (let i = 0; i < m.positions.length; i++) expect(g.attributes.position.array[i]).toBe(m.positions[i]);
    // PLY stores sRGB bytes; three's PLYLoader converts them to linear (SRGBColorSpace) and stores those as
    // normalized bytes again. Each byte rounding moves a value by at most 0.5/255; the sRGB one, seen in
    // linear, by at most 0.5/255 × 2.27 (the curve's steepest slope, at 1): together under 0.007.
    const col = g.attributes.color;
    expect(col.normalized).toBe(true);
    for (let v = 0; v < V(); v++) for (let k = 0; k < 3; k++) expect(Math.abs(col.getComponent(v, k) - m.colors![3 * v + k])).toBeLessThan(0.007);
    expect(new TextDecoder().decode(bytes.subarray(0, 200))).toMatch(/comment source: \{"file":"ball.onnx"\}/);
  });

  test('STL (binary): STLLoader reads every triangle with its corners and a unit face normal', async () => {
    const bytes = await exportMesh('stl', m);
    expect(bytes.length).toBe(84 + 50 * T()); // binary STL: 80-byte header, count, 50 bytes per triangle
    expect(new TextDecoder().decode(bytes.subarray(0, 5))).not.toBe('solid');
    const g = new STLLoader().parse(ab(bytes));
    expect(g.attributes.position.count).toBe(3 * T());
    for (let t = 0; t < T(); t += 37) {
      for (let k = 0; k < 3; k++) for (let a = 0; a < 3; a++) expect(g.attributes.position.getComponent(3 * t + k, a)).toBe(m.positions[3 * m.indices[3 * t + k] + a]);
      const n = new THREE.Vector3().fromBufferAttribute(g.attributes.normal as THREE.BufferAttribute, 3 * t);
      expect(n.length()).toBeCloseTo(1, 5);
    }
  });

  test('OBJ: OBJLoader reads every triangle, with normals and vertex colors', async () => {
    const bytes = await exportMesh('obj', m, { name: 'ball' });
    const group = new OBJLoader().parse(new TextDecoder().decode(bytes));
    const mesh = group.children[0] as THREE.Mesh;
    expect(mesh.name).toBe('ball');
    const g = mesh.geometry;
    expect(g.attributes.position.count).toBe(3 * T()); // OBJLoader un-indexes
    expect(g.attributes.normal.count).toBe(3 * T());
    expect(g.attributes.color.count).toBe(3 * T());
    // Corner k of triangle t: position to 9 significant digits, color back to linear within 1e-4.
    for (let t = 0; t < T(); t += 29) {
      for (let k = 0; k < 3; k++) {
        const v = m.indices[3 * t + k];
        for (let a = 0; a < 3; a++) {
          expect(g.attributes.position.getComponent(3 * t + k, a)).toBeCloseTo(m.positions[3 * v + a], 6);
          expect(g.attributes.color.getComponent(3 * t + k, a)).toBeCloseTo(m.colors![3 * v + a], 4);
        }
      }
    }
  });

  test('identical input gives identical bytes in every format', async () => {
    for (const f of EXPORT_FORMATS) expect(Buffer.from(await exportMesh(f, m)).equals(Buffer.from(await exportMesh(f, m))), f).toBe(true);
  });

  test('the format follows the extension, in any case', () => {
    expect(formatFromExtension('.GLB')).toBe('glb');
    expect(formatFromExtension('stl')).toBe('stl');
    expect(formatFromExtension('.fbx')).toBeUndefined();
  });
});
