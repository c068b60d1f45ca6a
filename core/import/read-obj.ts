/**
 * Reads Wavefront OBJ text: `v x y z [r g b]` vertices (the colors, when every vertex has them,
 * are taken as sRGB and converted to linear) and `f` faces (`a`, `a/b`, `a//c`, `a/b/c`, 1-based,
 * negative counting back from the latest vertex), polygons split into fans. All objects and
 * groups are read as one mesh. Everything else (normals, texture coordinates, materials) is
 * skipped: the checks need only positions and triangles.
 */
import type { MeshData } from '../types.js';
import { FieldkilnError } from '../types.js';
import { srgbToLinear } from '../color/srgb.js';

/**
 * The mesh in OBJ `bytes` (UTF-8 text).
 * @throws FieldkilnError naming the line of a malformed vertex or face.
 */
export function readObj(bytes: Uint8Array): MeshData {
  const text = new TextDecoder().decode(bytes);
  const pos: number[] = [];
  const col: number[] = [];
  let allColored = true;
  const tri: number[] = [];
  const lines = text.split(/\r?\n/);
  for (let ln = 0; ln < lines.length; ln++) {
    const parts = lines[ln].trim().split(/\s+/);
    if (parts[0] === 'v') {
      const xyz = parts.slice(1, 4).map(Number);
      if (xyz.length < 3 || xyz.some((x) => !Number.isFinite(x))) throw new FieldkilnError(`OBJ line ${ln + 1}: a vertex wants three numbers (got '${lines[ln].trim()}')`);
      pos.push(...xyz);
      if (parts.length >= 7) col.push(...parts.slice(4, 7).map((x) => srgbToLinear(Number(x))));
      else allColored = false;
    } else if (parts[0] === 'f') {
      const n = pos.length / 3;
      const ids = parts.slice(1).map((s) => {
        const i = parseInt(s.split('/')[0], 10);
        const v = i < 0 ? n + i : i - 1;
        if (!Number.isInteger(i) || i === 0 || v < 0 || v >= n) throw new FieldkilnError(`OBJ line ${ln + 1}: face corner '${s}' names no vertex defined so far (${n})`);
        return v;
      });
      if (ids.length < 3) throw new FieldkilnError(`OBJ line ${ln + 1}: a face wants at least three corners`);
      for (let k = 1; k + 1 < ids.length; k++) tri.push(ids[0], ids[k], ids[k + 1]);
    }
  }
  if (pos.length === 0) throw new FieldkilnError('OBJ: no vertices (v lines) found');
  const mesh: MeshData = { positions: Float32Array.from(pos), indices: Uint32Array.from(tri) };
  if (allColored && col.length === pos.length) mesh.colors = Float32Array.from(col);
  return mesh;
}
