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
 * - `quantize`: KHR_mesh_quantization (`quantize-mesh.ts`), marked required. `meshopt`:
 *   EXT_meshopt_compression on top of quantization (it implies it), vertices reordered for the
 *   vertex cache and fetch first (meshoptimizer's `reorderMesh`), marked required. Both off by default.
 *
 * Nothing time-dependent is written, so the same meshes and options give the same bytes.
 */
import { Document, WebIO, type Node } from '@gltf-transform/core';
import { EXTMeshoptCompression, KHRMeshQuantization } from '@gltf-transform/extensions';
import { MeshoptEncoder } from 'meshoptimizer';
import type { MeshData } from '../types.js';
import { FIELDKILN_VERSION } from '../version.js';
import { quantizeMesh } from './quantize-mesh.js';

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
  const colored = levels.some((m) => m.colors);
  const material = colored
    ? doc.createMaterial('fieldkiln-vertex-color').setBaseColorFactor([1, 1, 1, 1])
    : doc.createMaterial('fieldkiln-plain').setBaseColorFactor(WRITE_GLB_DEFAULTS.plainBaseColor);
  material.setMetallicFactor(WRITE_GLB_DEFAULTS.metallic).setRoughnessFactor(WRITE_GLB_DEFAULTS.roughness);

  const levelName = (i: number) => (levels.length > 1 ? `${name}_LOD${i}` : name);
  const nodes: Node[] = levels.map((m0, i) => {
    const m = meshopt ? reorderForMeshopt(m0) : m0;
    const prim = doc.createPrimitive().setMaterial(material);
    const acc = (label: string) => doc.createAccessor(`${levelName(i)}:${label}`).setBuffer(buffer);
    const node = doc.createNode(levelName(i));
    if (quantize) {
      const q = quantizeMesh(m);
      prim.setAttribute('POSITION', acc('POSITION').setType('VEC3').setArray(q.positions).setNormalized(true));
      prim.setAttribute('NORMAL', acc('NORMAL').setType('VEC3').setArray(q.normals!).setNormalized(true));
      if (q.colors) prim.setAttribute('COLOR_0', acc('COLOR_0').setType('VEC3').setArray(q.colors).setNormalized(true));
      prim.setIndices(acc('indices').setType('SCALAR').setArray(q.indices));
      node.setTranslation(q.translation).setScale([q.scale, q.scale, q.scale]);
    } else {
      prim.setAttribute('POSITION', acc('POSITION').setType('VEC3').setArray(m.positions));
      prim.setAttribute('NORMAL', acc('NORMAL').setType('VEC3').setArray(m.normals!));
      if (m.colors) prim.setAttribute('COLOR_0', acc('COLOR_0').setType('VEC3').setArray(m.colors));
      prim.setIndices(acc('indices').setType('SCALAR').setArray(m.indices));
    }
    return node.setMesh(doc.createMesh(levelName(i)).addPrimitive(prim));
  });
  const main = doc.createScene('fieldkiln').addChild(nodes[0]);
  for (let i = 1; i < nodes.length; i++) doc.createScene(`LOD${i}`).addChild(nodes[i]);
  doc.getRoot().setDefaultScene(main);
  return doc;
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

/** The mesh with its triangles and vertices reordered for the GPU and for meshopt compression. */
function reorderForMeshopt(m: MeshData): MeshData {
  const indices = Uint32Array.from(m.indices);
  const [remap, unique] = MeshoptEncoder.reorderMesh(indices, true, true);
  const move = (src: Float32Array) => {
    const dst = new Float32Array(3 * unique);
    for (let v = 0; v < remap.length; v++) {
      const r = remap[v];
      if (r !== 0xffffffff) dst.set(src.subarray(3 * v, 3 * v + 3), 3 * r);
    }
    return dst;
  };
  return {
    positions: move(m.positions),
    indices,
    ...(m.normals ? { normals: move(m.normals) } : {}),
    ...(m.colors ? { colors: move(m.colors) } : {}),
  };
}
