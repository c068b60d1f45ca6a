/**
 * Writes a mesh as binary little-endian PLY (Turk 1994, the Stanford polygon file format):
 * `element vertex` with float x, y, z, float nx, ny, nz (when the mesh has normals) and uchar red,
 * green, blue (when it has colors), then `element face` with `list uchar uint vertex_indices`.
 * Colors are written sRGB-encoded, as PLY viewers (and three's PLYLoader) read them; the mesh's
 * own colors are linear. Metres, +Y up, counter-clockwise faces. No timestamps: identical input,
 * identical bytes.
 */
import type { MeshData } from '../types.js';
import { FIELDKILN_VERSION } from '../version.js';
import { linearToSrgbByte } from '../color/srgb.js';

/**
 * PLY bytes for `mesh`.
 * @param comment extra header comment lines (no line breaks), e.g. the source file.
 * @example
 * const bytes = writePly(mesh, ['source lamp.onnx']);
 */
export function writePly(mesh: MeshData, comment: string[] = []): Uint8Array {
  const { positions: p, indices: idx, normals: n, colors: c } = mesh;
  const V = p.length / 3;
  const T = idx.length / 3;
  const lines = ['ply', 'format binary_little_endian 1.0', `comment Fieldkiln ${FIELDKILN_VERSION}`];
  for (const line of comment) lines.push(`comment ${line.replace(/[\r\n]+/g, ' ')}`);
  lines.push(`element vertex ${V}`, 'property float x', 'property float y', 'property float z');
  if (n) lines.push('property float nx', 'property float ny', 'property float nz');
  if (c) lines.push('property uchar red', 'property uchar green', 'property uchar blue');
  lines.push(`element face ${T}`, 'property list uchar uint vertex_indices', 'end_header', '');
  const header = new TextEncoder().encode(lines.join('\n'));
  const vsize = 12 + (n ? 12 : 0) + (c ? 3 : 0);
  const out = new Uint8Array(header.length + V * vsize + T * 13);
  out.set(header);
  const dv = new DataView(out.buffer);
  let o = header.length;
  for (let v = 0; v < V; v++) {
    for (let k = 0; k < 3; k++, o += 4) dv.setFloat32(o, p[3 * v + k], true);
    if (n) for (let k = 0; k < 3; k++, o += 4) dv.setFloat32(o, n[3 * v + k], true);
    if (c) for (let k = 0; k < 3; k++) out[o++] = linearToSrgbByte(c[3 * v + k]);
  }
  for (let t = 0; t < T; t++) {
    out[o++] = 3;
    for (let k = 0; k < 3; k++, o += 4) dv.setUint32(o, idx[3 * t + k], true);
  }
  return out;
}
