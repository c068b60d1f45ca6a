/**
 * The glTF files: byte-identical for identical input, a material for vertex-colored props,
 * asset.generator and provenance, LODs as nodes named by level with the base level as the default
 * scene, and every variant (plain, quantized, meshopt; GLB and .gltf) clean in Khronos glTF-Validator
 * (0 errors, 0 warnings) and read back by three's GLTFLoader with the same counts.
 */
import validator from 'gltf-validator';
import { WebIO } from '@gltf-transform/core';
import { EXTMeshoptCompression, KHRMeshQuantization } from '@gltf-transform/extensions';
import { MeshoptDecoder } from 'meshoptimizer';
import * as THREE from 'three';
import { GLTFLoader } from 'three/examples/jsm/loaders/GLTFLoader.js';
import { beforeAll, describe, expect, test } from 'vitest';
import { writeGlb, WRITE_GLB_DEFAULTS } from '../../../core/export/write-glb.js';
import { writeGltf } from '../../../core/export/write-gltf.js';
import { buildLods } from '../../../core/decimate/build-lods.js';
import { sampleOctree } from '../../../core/sampling/sample-octree.js';
import { marchingCubes } from '../../../core/meshing/marching-cubes.js';
import { areaWeightedNormals } from '../../../core/normals/area-weighted-normals.js';
import { FIELDKILN_VERSION } from '../../../core/version.js';
import type { MeshData } from '../../../core/types.js';
import { fnField, torusSdf } from '../../helpers/analytic-fields.js';

// three's FileLoader (which GLTFLoader uses for a .gltf's data: URIs) reports progress with the DOM's
// ProgressEvent, which Node 20 lacks; a minimal stand-in lets it run here.
(globalThis as { ProgressEvent?: unknown }).ProgressEvent ??= class extends Event {
  constructor(type: string, init: Record<string, unknown> = {}) {
    super(type);
    Object.assign(this, init);
  }
};

let base: MeshData;
let lods: MeshData[];
beforeAll(async () => {
  base = marchingCubes(await sampleOctree(fnField(torusSdf(0.6, 0.2), [-1, -0.4, -1, 1, 0.4, 1]), { depth: 5, level: 0 }));
  base.normals = areaWeightedNormals(base.positions, base.indices);
  base.colors = new Float32Array(base.positions.length).map((_, i) => (i % 3 === 0 ? 0.9 : 0.3) * ((i % 7) / 7));
  lods = (await buildLods(base, base, 2)).map((l) => l.mesh);
});

/** The JSON chunk of a GLB (glTF 2.0 spec, GLB file format: 12-byte header, then chunk length, type, data). */
function glbJson(glb: Uint8Array): Record<string, any> {
  const dv = new DataView(glb.buffer, glb.byteOffset, glb.byteLength);
  return JSON.parse(new TextDecoder().decode(glb.subarray(20, 20 + dv.getUint32(12, true))));
}

async function validate(bytes: Uint8Array) {
  return validator.validateBytes(bytes, { maxIssues: 20 });
}

/** Reads with three's GLTFLoader (meshopt decoder from the meshoptimizer package): per scene, its meshes' vertex and triangle counts. */
async function loadWithThree(bytes: Uint8Array) {
  await MeshoptDecoder.ready;
  const loader = new GLTFLoader().setMeshoptDecoder(MeshoptDecoder as never);
  const buffer = bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength);
  const gltf = await loader.parseAsync(buffer as ArrayBuffer, '');
  const count = (scene: THREE.Object3D) => {
    const out: { name: string; vertices: number; triangles: number; hasColor: boolean; world: THREE.Matrix4; position: THREE.BufferAttribute }[] = [];
    scene.updateMatrixWorld(true);
    scene.traverse((o) => {
      const m = o as THREE.Mesh;
      if (!m.isMesh) return;
      const g = m.geometry;
      out.push({ name: m.name, vertices: g.attributes.position.count, triangles: g.index!.count / 3, hasColor: !!g.attributes.color, world: m.matrixWorld.clone(), position: g.attributes.position as THREE.BufferAttribute });
    });
    return out;
  };
  return { gltf, scenes: gltf.scenes.map(count), defaultScene: count(gltf.scene) };
}

const levels = () => [base, ...lods];

describe('writeGlb', () => {
  test('identical input and options give byte-identical files (no timestamps)', async () => {
    const opts = { lods, extras: { source: { file: 'torus.json', sha256: 'abc' } } };
    const a = await writeGlb(base, opts);
    const b = await writeGlb(base, opts);
    expect(Buffer.from(a).equals(Buffer.from(b))).toBe(true);
    for (const extra of [{ quantize: true }, { meshopt: true }]) {
      const c = await writeGlb(base, { ...opts, ...extra });
      const d = await writeGlb(base, { ...opts, ...extra });
      expect(Buffer.from(c).equals(Buffer.from(d))).toBe(true);
    }
    expect(Buffer.from(await writeGltf(base, opts)).equals(Buffer.from(await writeGltf(base, opts)))).toBe(true);
  });

  test('asset.generator names Fieldkiln and its version; provenance is in asset.extras; a non-metal rough vertex-color material', async () => {
    const json = glbJson(await writeGlb(base, { extras: { source: { file: 'torus.json', sha256: 'abc' }, options: { depth: 5 } } }));
    expect(json.asset.generator).toBe(`Fieldkiln ${FIELDKILN_VERSION}`);
    expect(json.asset.version).toBe('2.0');
    expect(json.asset.extras.fieldkiln).toEqual({ source: { file: 'torus.json', sha256: 'abc' }, options: { depth: 5 } });
    expect(json.materials).toHaveLength(1);
    const pbr = json.materials[0].pbrMetallicRoughness;
    expect(pbr.metallicFactor).toBe(0);
    expect(pbr.roughnessFactor).toBe(WRITE_GLB_DEFAULTS.roughness);
    expect(pbr.roughnessFactor).toBeGreaterThanOrEqual(0.7);
    expect(pbr.baseColorFactor ?? [1, 1, 1, 1]).toEqual([1, 1, 1, 1]); // white: COLOR_0 shows as is (glTF multiplies them)
    // Without colors: a light grey base color instead.
    const plain = glbJson(await writeGlb({ ...base, colors: undefined }));
    expect(plain.materials[0].pbrMetallicRoughness.baseColorFactor).toEqual(WRITE_GLB_DEFAULTS.plainBaseColor);
    expect(plain.meshes[0].primitives[0].attributes.COLOR_0).toBeUndefined();
  });

  test('LODs: one mesh per level under nodes named by level; the default scene holds the base level only', async () => {
    const json = glbJson(await writeGlb(base, { name: 'ring', lods }));
    expect(json.nodes.map((n: { name: string }) => n.name)).toEqual(['ring_LOD0', 'ring_LOD1', 'ring_LOD2']);
    expect(json.meshes).toHaveLength(3);
    expect(json.scenes[json.scene].nodes).toEqual([0]);
    expect(json.scenes.map((s: { name: string; nodes: number[] }) => [s.name, s.nodes])).toEqual([['fieldkiln', [0]], ['LOD1', [1]], ['LOD2', [2]]]);
    // Without LODs the node keeps the plain name.
    expect(glbJson(await writeGlb(base, { name: 'ring' })).nodes[0].name).toBe('ring');
  });

  const variants: [string, (m: MeshData, o: object) => Promise<Uint8Array>, object][] = [
    ['GLB', writeGlb, {}],
    ['GLB, quantized (KHR_mesh_quantization)', writeGlb, { quantize: true }],
    ['GLB, meshopt (EXT_meshopt_compression)', writeGlb, { meshopt: true }],
    ['.gltf', writeGltf, {}],
    ['.gltf, quantized', writeGltf, { quantize: true }],
    ['.gltf, meshopt', writeGltf, { meshopt: true }],
  ];
  for (const [name, write, opts] of variants) {
    test(`${name}: glTF-Validator 0 errors 0 warnings, and three's GLTFLoader reads the same counts`, async () => {
      const bytes = await write(base, { ...opts, lods });
      let toValidate = bytes;
      if ('meshopt' in opts) {
        // gltf-validator cannot check EXT_meshopt data (../shared/DEPENDENCIES.md §5): decode the file and
        // write it again without the compression (still quantized), then validate that.
        await MeshoptDecoder.ready;
        const io = new WebIO().registerExtensions([KHRMeshQuantization, EXTMeshoptCompression]).registerDependencies({ 'meshopt.decoder': MeshoptDecoder });
        const doc = name.startsWith('GLB') ? await io.readBinary(bytes) : await io.readJSON({ json: JSON.parse(new TextDecoder().decode(bytes)), resources: {} });
        doc.getRoot().listExtensionsUsed().filter((e) => e.extensionName === 'EXT_meshopt_compression').forEach((e) => e.dispose());
        toValidate = await io.writeBinary(doc);
        const direct = await validate(bytes);
        expect(direct.issues.numErrors + direct.issues.numWarnings, JSON.stringify(direct.issues.messages)).toBe(0);
        expect(direct.info.extensionsUsed).toContain('EXT_meshopt_compression');
      }
      const v = await validate(toValidate);
      // Source: Khronos glTF-Validator.
      expect(v.issues.numErrors, JSON.stringify(v.issues.messages)).toBe(0);
      expect(v.issues.numWarnings, JSON.stringify(v.issues.messages)).toBe(0);
      expect(v.info.totalTriangleCount).toBe(levels().reduce((s, m) => s + m.indices.length / 3, 0));

      const three = await loadWithThree(bytes);
      expect(three.scenes.map((s) => s.map((m) => [m.vertices, m.triangles]))).toEqual(levels().map((m) => [[m.positions.length / 3, m.indices.length / 3]]));
      expect(three.defaultScene).toHaveLength(1);
      expect(three.defaultScene[0].triangles).toBe(base.indices.length / 3);
      expect(three.defaultScene.every((m) => m.hasColor)).toBe(true);
      // Positions come back in metres once the node transform is applied (quantization moves the scale there):
      // the mesh's bounding box agrees with the source's within the quantization step (2^-15 of the half extent).
      const box = new THREE.Box3().setFromBufferAttribute(three.defaultScene[0].position).applyMatrix4(three.defaultScene[0].world);
      const src = new THREE.Box3().setFromArray(base.positions);
      expect(box.min.distanceTo(src.min)).toBeLessThan(1e-4);
      expect(box.max.distanceTo(src.max)).toBeLessThan(1e-4);
    });
  }

  test('quantized and meshopt files are smaller than the plain GLB', async () => {
    const plain = (await writeGlb(base, { lods })).length;
    const q = (await writeGlb(base, { lods, quantize: true })).length;
    const mo = (await writeGlb(base, { lods, meshopt: true })).length;
    console.log(`GLB sizes (torus depth 5 + 2 LODs): plain ${plain} B, quantized ${q} B, meshopt ${mo} B`);
    expect(q).toBeLessThan(plain);
    expect(mo).toBeLessThan(q);
  });

  test('misuse: a mesh without normals throws, naming the function', async () => {
    await expect(() => writeGlb({ positions: base.positions, indices: base.indices })).rejects.toThrow(/writeGlb: mesh has no normals/);
  });
});
