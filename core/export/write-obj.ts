/**
 * Writes a mesh as Wavefront OBJ text: `v x y z` (followed by `r g b` when the mesh has colors,
 * the vertex-color extension most readers, three's OBJLoader among them, accept; sRGB-encoded
 * like PLY colors, since readers take them as display colors), `vn` normals when present, and
 * `f a//a b//b c//c` faces (1-based), under one `o` object. Numbers are written with 9
 * significant digits, enough to give back the same float32. No material library, no timestamps.
 */
import type { MeshData } from '../types.js';
import { FIELDKILN_VERSION } from '../version.js';
import { linearToSrgb } from '../color/srgb.js';

/**
 * OBJ text (UTF-8 bytes) for `mesh`.
 * @param name the object's name (`o` line). Default 'fieldkiln-mesh'.
 * @example
 * const bytes = writeObj(mesh, 'lamp');
 */
export function writeObj(mesh: MeshData, name = 'fieldkiln-mesh', comment: string[] = []): Uint8Array {
  const { positions: p, indices: idx, normals: n, colors: c } = mesh;
  const V = p.length / 3;
  const out: string[] = [`# Fieldkiln ${FIELDKILN_VERSION}: metres, +Y up, counter-clockwise faces`];
  for (const line of comment) out.push(`# ${line.replace(/[\r\n]+/g, ' ')}`);
  out.push(`o ${name.replace(/\s+/g, '_')}`);
  for (let v = 0; v < V; v++) {
    let line = `v ${num(p[3 * v])} ${num(p[3 * v + 1])} ${num(p[3 * v + 2])}`;
    if (c) line += ` ${col(c[3 * v])} ${col(c[3 * v + 1])} ${col(c[3 * v + 2])}`;
    out.push(line);
  }
  if (n) for (let v = 0; v < V; v++) out.push(`vn ${num(n[3 * v])} ${num(n[3 * v + 1])} ${num(n[3 * v + 2])}`);
  for (let t = 0; t < idx.length; t += 3) {
    const a = idx[t] + 1, b = idx[t + 1] + 1, d = idx[t + 2] + 1;
    out.push(n ? `f ${a}//${a} ${b}//${b} ${d}//${d}` : `f ${a} ${b} ${d}`);
  }
  out.push('');
  return new TextEncoder().encode(out.join('\n'));
}

function num(x: number): string {
  return Number.isFinite(x) ? String(Number(x.toPrecision(9))) : 'nan';
}

function col(x: number): string {
  return String(Number(linearToSrgb(Number.isFinite(x) ? x : 0).toFixed(5)));
}
