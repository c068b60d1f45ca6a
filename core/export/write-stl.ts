/**
 * Writes a mesh as binary STL, the format 3D printers' slicers take (which want closed, manifold
 * meshes: check before printing): an 80-byte header, a uint32 triangle count, then per triangle
 * the unit face normal and three corners as float32, and a zero uint16 attribute. Corners are
 * stored per triangle (STL has no shared vertices); readers weld them back by position. Metres,
 * +Y up as in glTF (slicers often expect +Z up and millimetres: scale and rotate there).
 * The header never starts with `solid`, which some readers take as the mark of ASCII STL.
 */
import type { MeshData } from '../types.js';
import { FIELDKILN_VERSION } from '../version.js';

/**
 * Binary STL bytes for `mesh`.
 * @example
 * const bytes = writeStl(mesh);
 */
export function writeStl(mesh: MeshData): Uint8Array {
  const { positions: p, indices: idx } = mesh;
  const T = idx.length / 3;
  const out = new Uint8Array(84 + 50 * T);
  const header = new TextEncoder().encode(`Fieldkiln ${FIELDKILN_VERSION} binary STL, metres, +Y up`.slice(0, 80));
  out.set(header);
  const dv = new DataView(out.buffer);
  dv.setUint32(80, T, true);
  let o = 84;
  for (let t = 0; t < T; t++) {
    const a = idx[3 * t], b = idx[3 * t + 1], c = idx[3 * t + 2];
    const ux = p[3 * b] - p[3 * a], uy = p[3 * b + 1] - p[3 * a + 1], uz = p[3 * b + 2] - p[3 * a + 2];
    const vx = p[3 * c] - p[3 * a], vy = p[3 * c + 1] - p[3 * a + 1], vz = p[3 * c + 2] - p[3 * a + 2];
    let nx = uy * vz - uz * vy, ny = uz * vx - ux * vz, nz = ux * vy - uy * vx;
    const len = Math.hypot(nx, ny, nz);
    if (len > 0) {
      nx /= len;
      ny /= len;
      nz /= len;
    }
    for (const x of [nx, ny, nz]) {
      dv.setFloat32(o, x, true);
      o += 4;
    }
    for (const v of [a, b, c]) {
      for (let k = 0; k < 3; k++, o += 4) dv.setFloat32(o, p[3 * v + k], true);
    }
    o += 2; // attribute byte count: 0
  }
  return out;
}
