/**
 * Writes meshes as binary glTF 2.0 (GLB) with glTF-Transform, in metres, +Y up, counter-clockwise
 * front faces:
 *
 * - Attributes: POSITION, NORMAL, COLOR_0 when the mesh has colors (linear RGB, as the glTF 2.0
 *   spec requires of vertex colors), indices.
 * - Levels of detail: the base mesh is node `<name>` (`<name>_LOD0` when there are further levels)
 *   in the default scene, so a viewer shows it alone; each further level is its own mesh under
 *   node `<name>_LOD<i>`, alone in scene `LOD<i>`. (`_LOD<i>` is the naming engines' importers
 *   look for.)
 * - One material for vertex-colored props: non-metal (metallic 0), rough (roughness 0.8, common
 *   practice for matte painted or fired surfaces), base color white so COLOR_0 shows as is; a
 *   mesh without colors gets a light grey base color instead.
 * - `asset.generator` names Fieldkiln and its version; provenance (source file, hash, options)
 *   goes in `asset.extras.fieldkiln`.
 * - Textures (`textures`, from `core/texture/bake-textures.ts`): the base level gets TEXCOORD_0,
 *   TANGENT (MikkTSpace, glTF handedness) and its own material `fieldkiln-textured` with a
 *   baseColorTexture (sRGB PNG; the base then carries no COLOR_0, which glTF would multiply in)
 *   and a normalTexture (tangent space), both sampled with trilinear filtering and clamped to the
 *   edge; LODs keep their vertex colors and the vertex-color material.
 * - Collision (`collision`): a mesh of its own (POSITION and indices only, no material) under node
 *   `<name>_collision`, alone in scene `collision`, not in the default scene, so viewers and
 *   importers that load the default scene do not draw it; its node's `extras.fieldkiln` says
 *   `{ role: 'collision', shape: 'convex-hull' }` for tools that look for it. Fieldkiln's own
 *   naming; glTF itself has no collision convention.
 * - `quantize`: KHR_mesh_quantization (`quantize-mesh.ts`), marked required. `meshopt`:
 *   EXT_meshopt_compression on top of quantization (it implies it), vertices reordered for the
 *   vertex cache and fetch first (meshoptimizer's `reorderMesh`), marked required. Both off by default.
 *
 * Nothing time-dependent is written, so the same meshes and options give the same bytes.
 */
import { Document, TextureInfo, WebIO, type Material, type Node } from '@gltf-transform/core';
import { EXTMeshoptCompression, KHRMeshQuantization } from '@gltf-transform/extensions';
import { MeshoptEncoder } from 'meshoptimizer';
import type { MeshData } from '../types.js';
import { FIELDKILN_VERSION } from '../version.js';
import { quantizeMesh, quantizeTangents, quantizeUvs } from './quantize-mesh.js';

/** Options for {@link writeGlb}. */
export interface WriteGlbOptions {
  /** Name of the base node and mesh. Default: 'fieldkiln-mesh'. */
  name?: string;
  /** Stored in the asset's `extras.fieldkiln` (provenance: source file, hash, options). */
  extras?: Record<string, unknown>;
  /** Further levels of detail (normals required), each about half the triangles of the one before. Default: none. */
  lods?: MeshData[];
  /** Quantize attributes (KHR_mesh_quantization). Default: false. */
  quantize?: boolean;
  /** Compress with EXT_meshopt_compression (implies `quantize`). Default: false. */
  meshopt?: boolean;
  /** Texture maps of the base level (see the file comment). Default: none. */
  textures?: GltfTextures;
  /** A collision shape, written as node `<name>_collision` in scene `collision`. Default: none. */
  collision?: MeshData;
}

/** The base level's texture maps; arrays are per vertex of the base mesh. */
export interface GltfTextures {
  /** TEXCOORD_0: 2 floats per vertex, 0..1, v down the image (glTF). */
  uvs: Float32Array;
  /** TANGENT: 4 floats per vertex, unit xyz and w = ±1. */
  tangents: Float32Array;
  /** Base color, PNG bytes, sRGB. Without it the material's base color is the plain grey. */
  baseColorPng?: Uint8Array;
  /** Tangent-space normals, PNG bytes. */
  normalPng: Uint8Array;
}

/** Defaults of {@link writeGlb}, and the material it writes (roughness unitless 0..1, base color linear RGBA). */
export const WRITE_GLB_DEFAULTS = {
  name: 'fieldkiln-mesh',
  quantize: false,
  meshopt: false,
  /** Material of vertex-colored props. */
  metallic: 0,
  roughness: 0.8,
  /** Base color of meshes without vertex colors (linear). */
  plainBaseColor: [0.8, 0.8, 0.8, 1] as [number, number, number, number],
};

/**
 * Builds the glTF document for `mesh` and its LODs (normals required). Quantizes when asked;
 * compression happens on write. With `meshopt`, `MeshoptEncoder.ready` must have resolved
 * (`createGltfIO` awaits it).
 */
export function buildDocument(mesh: MeshData, options: WriteGlbOptions = {}): Document {
  const levels = [mesh, ...(options.lods ?? [])];
  levels.forEach((m, i) => {
    if (!m.normals) throw new Error(`writeGlb: ${i === 0 ? 'mesh' : `LOD ${i}`} has no normals`);
  });
  const name = options.name ?? WRITE_GLB_DEFAULTS.name;
  const meshopt = options.meshopt ?? WRITE_GLB_DEFAULTS.meshopt;
  const quantize = meshopt || (options.quantize ?? WRITE_GLB_DEFAULTS.quantize);
  const doc = new Document();
  const asset = doc.getRoot().getAsset();
  asset.generator = `Fieldkiln ${FIELDKILN_VERSION}`;
  if (options.extras) asset.extras = { fieldkiln: options.extras };
  if (quantize) doc.createExtension(KHRMeshQuantization).setRequired(true);
  if (meshopt) doc.createExtension(EXTMeshoptCompression).setRequired(true).setEncoderOptions({ method: EXTMeshoptCompression.EncoderMethod.QUANTIZE });
  const buffer = doc.createBuffer();
  const tex = options.textures;
  if (tex && (tex.uvs.length !== (2 * mesh.positions.length) / 3 || tex.tangents.length !== (4 * mesh.positions.length) / 3)) {
    throw new Error('writeGlb: textures.uvs and textures.tangents must hold 2 and 4 floats per vertex of the mesh');
  }
  // With textures the base level's colors come from the texture; the vertex-color material serves the LODs.
  const colored = levels.some((m, i) => m.colors && !(i === 0 && tex));
  let material: Material | undefined;
  const levelMaterial = (i: number): Material => {
    if (i === 0 && tex) return texturedMaterial(doc, tex);
    if (!material) {
      material = colored
        ? doc.createMaterial('fieldkiln-vertex-color').setBaseColorFactor([1, 1, 1, 1])
        : doc.createMaterial('fieldkiln-plain').setBaseColorFactor(WRITE_GLB_DEFAULTS.plainBaseColor);
      material.setMetallicFactor(WRITE_GLB_DEFAULTS.metallic).setRoughnessFactor(WRITE_GLB_DEFAULTS.roughness);
    }
    return material;
  };

  const levelName = (i: number) => (levels.length > 1 ? `${name}_LOD${i}` : name);
  const nodes: Node[] = levels.map((m1, i) => {
    const withTex = i === 0 && tex ? tex : undefined;
    const m0 = withTex ? { ...m1, colors: undefined } : m1;
    const extra = withTex ? [withTex.uvs, withTex.tangents] : [];
    const [m, uvs, tangents] = meshopt ? reorderForMeshopt(m0, extra) : [m0, ...extra];
    const prim = doc.createPrimitive().setMaterial(levelMaterial(i));
    const acc = (label: string) => doc.createAccessor(`${levelName(i)}:${label}`).setBuffer(buffer);
    const node = doc.createNode(levelName(i));
    if (quantize) {
      const q = quantizeMesh(m);
      prim.setAttribute('POSITION', acc('POSITION').setType('VEC3').setArray(q.positions).setNormalized(true));
      prim.setAttribute('NORMAL', acc('NORMAL').setType('VEC3').setArray(q.normals!).setNormalized(true));
      if (q.colors) prim.setAttribute('COLOR_0', acc('COLOR_0').setType('VEC3').setArray(q.colors).setNormalized(true));
      if (withTex) {
        prim.setAttribute('TEXCOORD_0', acc('TEXCOORD_0').setType('VEC2').setArray(quantizeUvs(uvs)).setNormalized(true));
        prim.setAttribute('TANGENT', acc('TANGENT').setType('VEC4').setArray(quantizeTangents(tangents)).setNormalized(true));
      }
      prim.setIndices(acc('indices').setType('SCALAR').setArray(q.indices));
      node.setTranslation(q.translation).setScale([q.scale, q.scale, q.scale]);
    } else {
      prim.setAttribute('POSITION', acc('POSITION').setType('VEC3').setArray(m.positions));
      prim.setAttribute('NORMAL', acc('NORMAL').setType('VEC3').setArray(m.normals!));
      if (m.colors) prim.setAttribute('COLOR_0', acc('COLOR_0').setType('VEC3').setArray(m.colors));
      if (withTex) {
        prim.setAttribute('TEXCOORD_0', acc('TEXCOORD_0').setType('VEC2').setArray(uvs));
        prim.setAttribute('TANGENT', acc('TANGENT').setType('VEC4').setArray(tangents));
      }
      prim.setIndices(acc('indices').setType('SCALAR').setArray(m.indices));
    }
    return node.setMesh(doc.createMesh(levelName(i)).addPrimitive(prim));
  });
  const main = doc.createScene('fieldkiln').addChild(nodes[0]);
  for (let i = 1; i < nodes.length; i++) doc.createScene(`LOD${i}`).addChild(nodes[i]);
  if (options.collision) doc.createScene('collision').addChild(collisionNode(doc, buffer, `${name}_collision`, options.collision, quantize));
  doc.getRoot().setDefaultScene(main);
  return doc;
}

/** The base level's material: base color and normal textures (see the file comment). */
function texturedMaterial(doc: Document, tex: GltfTextures): Material {
  const material = doc
    .createMaterial('fieldkiln-textured')
    .setMetallicFactor(WRITE_GLB_DEFAULTS.metallic)
    .setRoughnessFactor(WRITE_GLB_DEFAULTS.roughness);
  const sampled = (info: TextureInfo | null) =>
    info!
      .setWrapS(TextureInfo.WrapMode.CLAMP_TO_EDGE)
      .setWrapT(TextureInfo.WrapMode.CLAMP_TO_EDGE)
      .setMinFilter(TextureInfo.MinFilter.LINEAR_MIPMAP_LINEAR)
      .setMagFilter(TextureInfo.MagFilter.LINEAR);
  if (tex.baseColorPng) {
    material.setBaseColorFactor([1, 1, 1, 1]).setBaseColorTexture(doc.createTexture('base-color').setImage(tex.baseColorPng).setMimeType('image/png'));
    sampled(material.getBaseColorTextureInfo());
  } else material.setBaseColorFactor(WRITE_GLB_DEFAULTS.plainBaseColor);
  material.setNormalTexture(doc.createTexture('normal').setImage(tex.normalPng).setMimeType('image/png'));
  sampled(material.getNormalTextureInfo());
  return material;
}

/** Node `name` holding the collision mesh (positions and indices only; see the file comment). */
function collisionNode(doc: Document, buffer: ReturnType<Document['createBuffer']>, name: string, hull: MeshData, quantize: boolean): Node {
  const prim = doc.createPrimitive();
  const acc = (label: string) => doc.createAccessor(`${name}:${label}`).setBuffer(buffer);
  const node = doc.createNode(name).setExtras({ fieldkiln: { role: 'collision', shape: 'convex-hull' } });
  if (quantize) {
    const q = quantizeMesh({ positions: hull.positions, indices: hull.indices });
    prim.setAttribute('POSITION', acc('POSITION').setType('VEC3').setArray(q.positions).setNormalized(true));
    prim.setIndices(acc('indices').setType('SCALAR').setArray(q.indices));
    node.setTranslation(q.translation).setScale([q.scale, q.scale, q.scale]);
  } else {
    prim.setAttribute('POSITION', acc('POSITION').setType('VEC3').setArray(hull.positions));
    prim.setIndices(acc('indices').setType('SCALAR').setArray(hull.indices));
  }
  return node.setMesh(doc.createMesh(name).addPrimitive(prim));
}

/** The IO that writes (and reads) Fieldkiln's files: quantization and meshopt registered. */
export async function createGltfIO(): Promise<WebIO> {
  await MeshoptEncoder.ready;
  const { MeshoptDecoder } = await import('meshoptimizer');
  await MeshoptDecoder.ready;
  return new WebIO()
    .registerExtensions([KHRMeshQuantization, EXTMeshoptCompression])
    .registerDependencies({ 'meshopt.encoder': MeshoptEncoder, 'meshopt.decoder': MeshoptDecoder });
}

/**
 * Serializes `mesh` (and its LODs) to GLB bytes.
 * @example
 * const glb = await writeGlb(mesh, { lods, extras: { source: { file: 'lamp.onnx' } } });
 */
export async function writeGlb(mesh: MeshData, options: WriteGlbOptions = {}): Promise<Uint8Array> {
  const io = await createGltfIO();
  return io.writeBinary(buildDocument(mesh, options));
}

/**
 * The mesh with its triangles and vertices reordered for the GPU and for meshopt compression, and
 * `extra` per-vertex arrays (any number of floats per vertex) moved the same way.
 */
function reorderForMeshopt(m: MeshData, extra: Float32Array[] = []): [MeshData, ...Float32Array[]] {
  const indices = Uint32Array.from(m.indices);
  const [remap, unique] = MeshoptEncoder.reorderMesh(indices, true, true);
  const V = m.positions.length / 3;
  const move = (src: Float32Array) => {
    const k = src.length / V;
    const dst = new Float32Array(k * unique);
    for (let v = 0; v < remap.length; v++) {
      const r = remap[v];
      if (r !== 0xffffffff) dst.set(src.subarray(k * v, k * v + k), k * r);
    }
    return dst;
  };
  const out: MeshData = {
    positions: move(m.positions),
    indices,
    ...(m.normals ? { normals: move(m.normals) } : {}),
    ...(m.colors ? { colors: move(m.colors) } : {}),
  };
  return [out, ...extra.map(move)];
}
