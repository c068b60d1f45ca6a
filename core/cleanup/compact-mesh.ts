/**
 * Drops the vertices no triangle uses and renumbers the rest in order of first use, carrying
 * normals and colors along. Decimation and cleanup return index buffers into the old vertex
 * arrays; this turns them back into a self-contained mesh.
 */
import type { MeshData } from '../types.js';

/**
 * A mesh with only the vertices `indices` uses, numbered in order of first use (deterministic).
 * @param mesh source vertices (positions, and normals/colors when present, 3 floats per vertex).
 * @param indices triangles into `mesh`'s vertices, 3 per triangle. Default: `mesh.indices`.
 * @returns the compacted mesh and `remap`: new index of each old vertex, or -1 when dropped.
 * @example
 * const { mesh: small } = compactMesh(mesh, simplifiedIndices);
 */
export function compactMesh(mesh: MeshData, indices: Uint32Array = mesh.indices): { mesh: MeshData; remap: Int32Array } {
  const V = mesh.positions.length / 3;
  const remap = new Int32Array(V).fill(-1);
  const out = new Uint32Array(indices.length);
  let n = 0;
  for (let i = 0; i < indices.length; i++) {
    const v = indices[i];
    if (v >= V) throw new Error(`compactMesh: index ${v} at ${i} is out of range (${V} vertices)`);
    if (remap[v] < 0) remap[v] = n++;
    out[i] = remap[v];
  }
  const pick = (src: Float32Array): Float32Array => {
    const dst = new Float32Array(3 * n);
    for (let v = 0; v < V; v++) {
      const r = remap[v];
      if (r >= 0) {
        dst[3 * r] = src[3 * v];
        dst[3 * r + 1] = src[3 * v + 1];
        dst[3 * r + 2] = src[3 * v + 2];
      }
    }
    return dst;
  };
  const result: MeshData = { positions: pick(mesh.positions), indices: out };
  if (mesh.normals) result.normals = pick(mesh.normals);
  if (mesh.colors) result.colors = pick(mesh.colors);
  return { mesh: result, remap };
}
