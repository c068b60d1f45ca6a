/** Test helper: two meshes side by side in one buffer (the second's indices shifted past the first's vertices). */
import type { MeshData } from '../../core/types.js';

export function combineMeshes(a: MeshData, b: MeshData): MeshData {
  const va = a.positions.length / 3;
  const positions = new Float32Array(a.positions.length + b.positions.length);
  positions.set(a.positions);
  positions.set(b.positions, a.positions.length);
  const indices = new Uint32Array(a.indices.length + b.indices.length);
  indices.set(a.indices);
  for (let q = 0; q < b.indices.length; q++) indices[a.indices.length + q] = b.indices[q] + va;
  return { positions, indices };
}
