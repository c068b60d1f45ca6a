/**
 * Quantization of a mesh's vertex attributes to the integer types KHR_mesh_quantization allows
 * (Khronos, "KHR_mesh_quantization", glTF 2.0 extension): positions as normalized int16 in a
 * cube around the mesh, undone by a node transform (translation = cube centre, uniform scale =
 * half its edge); normals as normalized int8; colors as normalized uint8 (valid glTF without the
 * extension); indices as uint16 when fewer than 65 535 vertices (65 535 itself is the
 * primitive-restart value, which glTF forbids as an index); texture maps' UVs as normalized uint16
 * and tangents as normalized int8 (`quantizeUvs`, `quantizeTangents`).
 *
 * Precision: positions to (half edge) / 32 767, e.g. 15 µm on a 1 m prop; normals and tangents to
 * 1/127 per component (under 0.5°); colors to 1/255; UVs to 1/65 535.
 */
import { positionBounds, type MeshData } from '../types.js';

/** A quantized mesh and the node transform that restores metres. */
export interface QuantizedMesh {
  /** Normalized int16, 3 per vertex: position = translation + scale × value / 32 767. */
  positions: Int16Array;
  /** Normalized int8, 3 per vertex. */
  normals?: Int8Array;
  /** Normalized uint8, 3 per vertex (linear RGB). */
  colors?: Uint8Array;
  indices: Uint16Array | Uint32Array;
  /** Node translation, metres. */
  translation: [number, number, number];
  /** Node scale (uniform), metres per unit. */
  scale: number;
}

/**
 * Quantizes `mesh` (see the file comment).
 * @example
 * const q = quantizeMesh(mesh); // node.setTranslation(q.translation).setScale([q.scale, q.scale, q.scale])
 */
export function quantizeMesh(mesh: MeshData): QuantizedMesh {
  const p = mesh.positions;
  const V = p.length / 3;
  const box = positionBounds(p);
  const lo = box.slice(0, 3), hi = box.slice(3);
  if (V === 0) lo.fill(0), hi.fill(0);
  // Float32 centre and scale, so the node transform holds exactly the values used here.
  const translation = [0, 1, 2].map((a) => Math.fround((lo[a] + hi[a]) / 2)) as [number, number, number];
  let half = 0;
  for (let a = 0; a < 3; a++) half = Math.max(half, hi[a] - translation[a], translation[a] - lo[a]);
  const scale = Math.fround(half > 0 ? half * (1 + 1e-6) : 1);
  const positions = new Int16Array(3 * V);
  for (let v = 0; v < V; v++) {
    for (let a = 0; a < 3; a++) {
      const q = Math.round(((p[3 * v + a] - translation[a]) / scale) * 32767);
      positions[3 * v + a] = Math.max(-32767, Math.min(32767, q));
    }
  }
  const out: QuantizedMesh = {
    positions,
    indices: V < 65535 ? Uint16Array.from(mesh.indices) : Uint32Array.from(mesh.indices),
    translation,
    scale,
  };
  if (mesh.normals) out.normals = quantizeNormals(mesh.normals);
  if (mesh.colors) {
    const c = mesh.colors;
    const colors = new Uint8Array(c.length);
    for (let i = 0; i < c.length; i++) colors[i] = Math.round(255 * Math.min(1, Math.max(0, Number.isFinite(c[i]) ? c[i] : 0)));
    out.colors = colors;
  }
  return out;
}

/**
 * Unit vectors to normalized int8, choosing per vector among the roundings up and down of each
 * component the one whose decoded length is nearest 1 (validators check that normals are unit
 * length; plain rounding can miss by more than their tolerance), ties to the nearer direction.
 */
export function quantizeNormals(n: Float32Array): Int8Array {
  const out = new Int8Array(n.length);
  const c = [0, 0, 0];
  for (let i = 0; i < n.length; i += 3) {
    let best = Infinity;
    for (let m = 0; m < 8; m++) {
      for (let a = 0; a < 3; a++) {
        const x = n[i + a] * 127;
        c[a] = Math.max(-127, Math.min(127, (m >> a) & 1 ? Math.ceil(x) : Math.floor(x)));
      }
      // Square roots, not Math.hypot: this runs 8 times per vertex, and hypot is several times slower.
      const len = Math.sqrt(c[0] * c[0] + c[1] * c[1] + c[2] * c[2]) / 127;
      const dx = c[0] / 127 - n[i], dy = c[1] / 127 - n[i + 1], dz = c[2] / 127 - n[i + 2];
      const dir = Math.sqrt(dx * dx + dy * dy + dz * dz);
      const score = Math.abs(len - 1) + 1e-3 * dir;
      if (score < best) {
        best = score;
        out[i] = c[0];
        out[i + 1] = c[1];
        out[i + 2] = c[2];
      }
    }
  }
  return out;
}

/**
 * UVs in 0..1 to normalized uint16 (valid glTF TEXCOORD without any extension): 1/65 535 of the
 * texture, a thirtieth of a texel at 2048². Values outside 0..1 are clamped.
 */
export function quantizeUvs(uvs: Float32Array): Uint16Array {
  const out = new Uint16Array(uvs.length);
  for (let i = 0; i < uvs.length; i++) out[i] = Math.round(65535 * Math.min(1, Math.max(0, Number.isFinite(uvs[i]) ? uvs[i] : 0)));
  return out;
}

/**
 * Tangents (unit xyz, w = ±1; 4 floats per vertex) to normalized int8 as KHR_mesh_quantization
 * allows for TANGENT: xyz like {@link quantizeNormals} (decoded length nearest 1), w as ±127.
 */
export function quantizeTangents(tangents: Float32Array): Int8Array {
  const V = tangents.length / 4;
  const xyz = new Float32Array(3 * V);
  for (let v = 0; v < V; v++) xyz.set(tangents.subarray(4 * v, 4 * v + 3), 3 * v);
  const q = quantizeNormals(xyz);
  const out = new Int8Array(4 * V);
  for (let v = 0; v < V; v++) {
    out.set(q.subarray(3 * v, 3 * v + 3), 4 * v);
    out[4 * v + 3] = tangents[4 * v + 3] < 0 ? -127 : 127;
  }
  return out;
}
