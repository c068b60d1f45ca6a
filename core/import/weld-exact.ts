/**
 * Joins vertices with bit-identical positions, for formats that store corners per triangle (STL)
 * or split one surface into parts (glTF primitives). Exact equality is the right test here: a
 * writer that had one shared vertex writes the same float32 bits for each copy. (Extraction never
 * welds: it shares vertices by construction.)
 */
import type { MeshData } from '../types.js';

/**
 * One vertex per distinct position; triangles renumbered, colors and normals of the first copy kept.
 * @param positions 3 floats per vertex; `indices` 3 per triangle.
 */
export function weldExact(mesh: MeshData): MeshData {
  const { positions: p, indices } = mesh;
  const V = p.length / 3;
  const bits = new Uint32Array(p.buffer, p.byteOffset, p.length);
  const map = new Map<string, number>();
  const remap = new Uint32Array(V);
  const first: number[] = [];
  for (let v = 0; v < V; v++) {
    const key = `${bits[3 * v]},${bits[3 * v + 1]},${bits[3 * v + 2]}`;
    let id = map.get(key);
    if (id === undefined) {
      id = first.length;
      map.set(key, id);
      first.push(v);
    }
    remap[v] = id;
  }
  const pick = (src: Float32Array) => {
    const dst = new Float32Array(3 * first.length);
    first.forEach((v, i) => dst.set(src.subarray(3 * v, 3 * v + 3), 3 * i));
    return dst;
  };
  const out: MeshData = { positions: pick(p), indices: indices.map((i) => remap[i]) };
  if (mesh.normals) out.normals = pick(mesh.normals);
  if (mesh.colors) out.colors = pick(mesh.colors);
  return out;
}
