/**
 * Reads STL, binary (80-byte header, uint32 count, 50 bytes per triangle) or ASCII (`solid …
 * facet normal … outer loop vertex x y z … endsolid`), into an indexed mesh: corners are joined
 * by exact position (`weld-exact.ts`), since STL stores them per triangle. A file is binary when
 * its size is exactly 84 + 50 × its stated count (ASCII files also start with `solid`, and so do
 * some binary headers, so the size decides).
 */
import type { MeshData } from '../types.js';
import { FieldkilnError } from '../types.js';
import { weldExact } from './weld-exact.js';

/**
 * The mesh in STL `bytes`.
 * @throws FieldkilnError when the bytes are neither binary nor ASCII STL.
 */
export function readStl(bytes: Uint8Array): MeshData {
  if (bytes.length >= 84) {
    const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
    const n = dv.getUint32(80, true);
    if (bytes.length === 84 + 50 * n) {
      const positions = new Float32Array(9 * n);
      for (let t = 0; t < n; t++) for (let k = 0; k < 9; k++) positions[9 * t + k] = dv.getFloat32(84 + 50 * t + 12 + 4 * k, true);
      return weldExact({ positions, indices: Uint32Array.from({ length: 3 * n }, (_, i) => i) });
    }
  }
  const text = new TextDecoder().decode(bytes.subarray(0, Math.min(bytes.length, 1 << 30)));
  if (!/^\s*solid\b/.test(text)) {
    throw new FieldkilnError(`STL: not a binary STL (size ${bytes.length} bytes does not match its triangle count) and not ASCII STL (no 'solid' at the start)`);
  }
  const coords: number[] = [];
  const re = /vertex\s+(\S+)\s+(\S+)\s+(\S+)/g;
  for (let m = re.exec(text); m; m = re.exec(text)) {
    const xyz = [Number(m[1]), Number(m[2]), Number(m[3])];
    if (xyz.some((x) => !Number.isFinite(x))) throw new FieldkilnError(`STL: vertex '${m[0]}' has a coordinate that is not a number`);
    coords.push(...xyz);
  }
  if (coords.length % 9 !== 0) throw new FieldkilnError(`STL: ${coords.length / 3} vertices is not a whole number of triangles`);
  return weldExact({ positions: Float32Array.from(coords), indices: Uint32Array.from({ length: coords.length / 3 }, (_, i) => i) });
}
