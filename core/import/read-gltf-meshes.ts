/**
 * Reads the triangle meshes of a glTF 2.0 file (GLB, or `.gltf` JSON with its buffers embedded or
 * handed over), one per node that has a mesh, in world space: each position goes through the
 * node's world matrix, and triangles are re-wound when that matrix mirrors (negative determinant),
 * as glTF prescribes. Quantized (KHR_mesh_quantization) and meshopt-compressed
 * (EXT_meshopt_compression) files are decoded. The primitives of one node are joined, and their
 * vertices welded by exact position (`weld-exact.ts`), since a surface split by material shares
 * its seams only by position; so is a primitive with TEXCOORD_0, whose vertices are split along
 * its UV seams.
 */
import { WebIO, type Node } from '@gltf-transform/core';
import { EXTMeshoptCompression, KHRMeshQuantization } from '@gltf-transform/extensions';
import { MeshoptDecoder } from 'meshoptimizer';
import type { MeshData } from '../types.js';
import { FieldkilnError } from '../types.js';
import { weldExact } from './weld-exact.js';

/** A mesh with the name of the node that holds it. */
export interface NamedMesh {
  name: string;
  mesh: MeshData;
}

/** Options for {@link readGltfMeshes}. */
export interface ReadGltfOptions {
  /** For `.gltf` JSON: the bytes of each external buffer by its `uri` as written in the file. */
  resources?: Record<string, Uint8Array>;
}

const TRIANGLES = 4;

/**
 * The meshes of a GLB or `.gltf` file.
 * @param bytes the file's bytes (GLB, or UTF-8 JSON).
 * @throws FieldkilnError when the bytes are not glTF, a buffer is missing, or a primitive is not triangles.
 * @example
 * for (const { name, mesh } of await readGltfMeshes(bytes)) console.log(name, mesh.indices.length / 3);
 */
export async function readGltfMeshes(bytes: Uint8Array, options: ReadGltfOptions = {}): Promise<NamedMesh[]> {
  await MeshoptDecoder.ready;
  const io = new WebIO().registerExtensions([KHRMeshQuantization, EXTMeshoptCompression]).registerDependencies({ 'meshopt.decoder': MeshoptDecoder });
  const isGlb = bytes.length >= 4 && bytes[0] === 0x67 && bytes[1] === 0x6c && bytes[2] === 0x54 && bytes[3] === 0x46; // 'glTF'
  let doc;
  try {
    if (isGlb) doc = await io.readBinary(bytes);
    else {
      const json = JSON.parse(new TextDecoder().decode(bytes));
      const resources: Record<string, Uint8Array<ArrayBuffer>> = {};
      for (const b of json.buffers ?? []) {
        if (!b.uri || /^data:/.test(b.uri)) continue;
        const r = options.resources?.[b.uri];
        if (!r) throw new FieldkilnError(`glTF: buffer '${b.uri}' was not found beside the file`);
        resources[b.uri] = new Uint8Array(r);
      }
      doc = await io.readJSON({ json, resources });
    }
  } catch (e) {
    if (e instanceof FieldkilnError) throw e;
    throw new FieldkilnError(`glTF: could not read the file: ${(e as Error).message}`);
  }
  const out: NamedMesh[] = [];
  doc.getRoot()
    .listNodes()
    .forEach((node: Node, n: number) => {
      const mesh = node.getMesh();
      if (!mesh) return;
      const m = node.getWorldMatrix();
      const det =
        m[0] * (m[5] * m[10] - m[6] * m[9]) - m[4] * (m[1] * m[10] - m[2] * m[9]) + m[8] * (m[1] * m[6] - m[2] * m[5]);
      const pos: number[] = [];
      const tri: number[] = [];
      const el: number[] = [];
      for (const prim of mesh.listPrimitives()) {
        if (prim.getMode() !== TRIANGLES) throw new FieldkilnError(`glTF: node '${node.getName() || n}' has a primitive of mode ${prim.getMode()}; only triangles (4) are checked`);
        const p = prim.getAttribute('POSITION');
        if (!p) continue;
        const base = pos.length / 3;
        for (let i = 0; i < p.getCount(); i++) {
          p.getElement(i, el);
          const [x, y, z] = el;
          pos.push(m[0] * x + m[4] * y + m[8] * z + m[12], m[1] * x + m[5] * y + m[9] * z + m[13], m[2] * x + m[6] * y + m[10] * z + m[14]);
        }
        const idx = prim.getIndices();
        const count = idx ? idx.getCount() : p.getCount();
        for (let t = 0; t + 2 < count; t += 3) {
          const a = idx ? idx.getScalar(t) : t, b = idx ? idx.getScalar(t + 1) : t + 1, c = idx ? idx.getScalar(t + 2) : t + 2;
          if (det < 0) tri.push(base + a, base + c, base + b);
          else tri.push(base + a, base + b, base + c);
        }
      }
      const joined: MeshData = { positions: Float32Array.from(pos), indices: Uint32Array.from(tri) };
      // Split surfaces share their seams only by position: several primitives (materials), or UV seams.
      const split = mesh.listPrimitives().length > 1 || mesh.listPrimitives().some((q) => q.getAttribute('TEXCOORD_0') !== null);
      out.push({ name: node.getName() || `node ${n}`, mesh: split ? weldExact(joined) : joined });
    });
  return out;
}
