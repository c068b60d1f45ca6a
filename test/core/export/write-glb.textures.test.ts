/**
 * glTF output with texture maps and a collision hull: TEXCOORD_0, TANGENT, a material with
 * baseColorTexture and normalTexture, the collision node in its own scene, clean in Khronos
 * glTF-Validator (0 errors, 0 warnings) for every variant, and read back closed by Fieldkiln's own
 * reader (UV seams weld by position).
 */
import validator from 'gltf-validator';
import { WebIO } from '@gltf-transform/core';
import { EXTMeshoptCompression, KHRMeshQuantization } from '@gltf-transform/extensions';
import { MeshoptDecoder } from 'meshoptimizer';
import * as watlas from 'watlas';
import { beforeAll, describe, expect, test } from 'vitest';
import { writeGlb, type GltfTextures, type WriteGlbOptions } from '../../../core/export/write-glb.js';
import { writeGltf } from '../../../core/export/write-gltf.js';
import { buildLods } from '../../../core/decimate/build-lods.js';
import { sampleOctree } from '../../../core/sampling/sample-octree.js';
import { marchingCubes } from '../../../core/meshing/marching-cubes.js';
import { areaWeightedNormals } from '../../../core/normals/area-weighted-normals.js';
import { unwrapMesh } from '../../../core/texture/unwrap-mesh.js';
import { computeTangents } from '../../../core/texture/compute-tangents.js';
import { encodePng } from '../../../core/texture/encode-png.js';
import { convexHull } from '../../../core/collision/convex-hull.js';
import { readGltfMeshes } from '../../../core/import/read-gltf-meshes.js';
import type { MeshData } from '../../../core/types.js';
import { fnField, torusSdf } from '../../helpers/analytic-fields.js';
import { expectMesh } from '../../helpers/expect-mesh.js';

let base: MeshData;
let split: MeshData;
let textures: GltfTextures;
let lods: MeshData[];
let hull: MeshData;
beforeAll(async () => {
  await watlas.Initialize();
  base = marchingCubes(await sampleOctree(fnField(torusSdf(0.6, 0.2), [-1, -0.4, -1, 1, 0.4, 1]), { depth: 5, level: 0 }));
  base.normals = areaWeightedNormals(base.positions, base.indices);
  base.colors = new Float32Array(base.positions.length).fill(0.4);
  lods = (await buildLods(base, base, 1)).map((l) => l.mesh);
  const u = unwrapMesh(base, watlas, { size: 64 });
  split = u.mesh;
  const px = new Uint8Array(64 * 64 * 3).fill(128);
  textures = {
    uvs: u.uvs,
    tangents: computeTangents(split.positions, split.normals!, u.uvs, split.indices),
    baseColorPng: await encodePng(px, 64, 64, 3),
    normalPng: await encodePng(px.map((_, i) => (i % 3 === 2 ? 255 : 128)), 64, 64, 3),
  };
  hull = convexHull(base.positions)!.mesh;
});

function glbJson(glb: Uint8Array): Record<string, any> {
  const dv = new DataView(glb.buffer, glb.byteOffset, glb.byteLength);
  return JSON.parse(new TextDecoder().decode(glb.subarray(20, 20 + dv.getUint32(12, true))));
}

/** Validator report; meshopt files are decoded and written again first (the validator cannot read EXT_meshopt data, DEPENDENCIES.md §5). */
async function validate(bytes: Uint8Array, meshopt: boolean) {
  if (!meshopt) return validator.validateBytes(bytes, { maxIssues: 20 });
  await MeshoptDecoder.ready;
  const io = new WebIO().registerExtensions([KHRMeshQuantization, EXTMeshoptCompression]).registerDependencies({ 'meshopt.decoder': MeshoptDecoder });
  const doc = await io.readBinary(bytes);
  doc.getRoot().listExtensionsUsed().filter((e) => e.extensionName === 'EXT_meshopt_compression').forEach((e) => e.dispose());
  return validator.validateBytes(await io.writeBinary(doc), { maxIssues: 20 });
}

describe('textures and collision in glTF', () => {
  const variants: [string, WriteGlbOptions][] = [
    ['plain', {}],
    ['quantized', { quantize: true }],
    ['meshopt', { meshopt: true }],
    ['with LODs', { lods }],
  ];
  for (const [name, opts] of variants) {
    test(`${name}: glTF-Validator finds 0 errors and 0 warnings`, async () => {
      const bytes = await writeGlb(split, { ...opts, textures, collision: hull });
      const v = await validate(bytes, !!opts.meshopt);
      // Source: Khronos glTF-Validator.
      expect(v.issues.numErrors, JSON.stringify(v.issues.messages)).toBe(0);
      expect(v.issues.numWarnings, JSON.stringify(v.issues.messages)).toBe(0);
    });
  }

  test('.gltf with embedded images: 0 errors, 0 warnings; images are data: URIs', async () => {
    const bytes = await writeGltf(split, { textures, collision: hull });
    const v = await validator.validateBytes(bytes, { maxIssues: 20 });
    expect(v.issues.numErrors + v.issues.numWarnings, JSON.stringify(v.issues.messages)).toBe(0);
    const json = JSON.parse(new TextDecoder().decode(bytes));
    for (const img of json.images) expect(img.uri).toMatch(/^data:image\/png;base64,/);
  });

  test('the base primitive has TEXCOORD_0 and TANGENT and no COLOR_0; its material samples both textures, clamped, trilinear', async () => {
    const json = glbJson(await writeGlb(split, { textures, lods }));
    const prim = json.meshes[0].primitives[0];
    expect(Object.keys(prim.attributes).sort()).toEqual(['NORMAL', 'POSITION', 'TANGENT', 'TEXCOORD_0']);
    expect(json.accessors[prim.attributes.TANGENT].type).toBe('VEC4');
    const mat = json.materials[prim.material];
    expect(mat.name).toBe('fieldkiln-textured');
    const tex = (i: number) => json.textures[i];
    const color = tex(mat.pbrMetallicRoughness.baseColorTexture.index);
    const normal = tex(mat.normalTexture.index);
    for (const t of [color, normal]) {
      expect(json.images[t.source].mimeType).toBe('image/png');
      // glTF 2.0 sampler enums: 33071 CLAMP_TO_EDGE, 9987 LINEAR_MIPMAP_LINEAR, 9729 LINEAR.
      expect(json.samplers[t.sampler]).toEqual({ wrapS: 33071, wrapT: 33071, minFilter: 9987, magFilter: 9729 });
    }
    // The LOD keeps its vertex colors and the vertex-color material.
    const lodPrim = json.meshes[1].primitives[0];
    expect(lodPrim.attributes.COLOR_0).toBeDefined();
    expect(json.materials[lodPrim.material].name).toBe('fieldkiln-vertex-color');
  });

  test('the collision hull: node <name>_collision alone in scene "collision", outside the default scene, marked in extras', async () => {
    const json = glbJson(await writeGlb(split, { name: 'urn', textures, collision: hull }));
    const node = json.nodes.findIndex((n: { name: string }) => n.name === 'urn_collision');
    expect(node).toBeGreaterThanOrEqual(0);
    expect(json.nodes[node].extras).toEqual({ fieldkiln: { role: 'collision', shape: 'convex-hull' } });
    expect(json.scenes[json.scene].nodes).not.toContain(node);
    expect(json.scenes.find((s: { name: string }) => s.name === 'collision').nodes).toEqual([node]);
    const prim = json.meshes[json.nodes[node].mesh].primitives[0];
    expect(Object.keys(prim.attributes)).toEqual(['POSITION']);
    expect(prim.material).toBeUndefined();
  });

  test('read back with Fieldkiln\'s reader, the split base level welds to the closed torus and the hull is closed', async () => {
    for (const quantize of [false, true]) {
      const meshes = await readGltfMeshes(await writeGlb(split, { textures, collision: hull, quantize }));
      expect(meshes.map((m) => m.name)).toEqual(['fieldkiln-mesh', 'fieldkiln-mesh_collision']);
      expectMesh(meshes[0].mesh, { components: 1, genus: 1 }, `base, quantize ${quantize}`);
      expectMesh(meshes[1].mesh, { components: 1, genus: 0 }, `hull, quantize ${quantize}`);
    }
  });

  test('a field without color: the material keeps the plain grey base color and only the normal texture', async () => {
    const bytes = await writeGlb(split, { textures: { ...textures, baseColorPng: undefined } });
    const v = await validator.validateBytes(bytes, { maxIssues: 20 });
    expect(v.issues.numErrors + v.issues.numWarnings, JSON.stringify(v.issues.messages)).toBe(0);
    const mat = glbJson(bytes).materials[0];
    expect(mat.pbrMetallicRoughness.baseColorTexture).toBeUndefined();
    expect(mat.pbrMetallicRoughness.baseColorFactor).toEqual([0.8, 0.8, 0.8, 1]);
    expect(mat.normalTexture).toBeDefined();
  });

  test('textures whose arrays do not match the mesh are misuse', async () => {
    await expect(writeGlb(split, { textures: { ...textures, uvs: textures.uvs.subarray(2) } })).rejects.toThrow(/writeGlb: textures.uvs/);
  });
});
