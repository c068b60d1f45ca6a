/**
 * Small hand-built meshes with known topology, and one-change ways to break them, for the checks,
 * cleanup and decimation tests. Every closed mesh here winds counter-clockwise seen from outside.
 */
import type { MeshData } from '../../../core/types.js';

export function mesh(positions: number[], indices: number[]): MeshData {
  return { positions: Float32Array.from(positions), indices: Uint32Array.from(indices) };
}

/**
 * Regular-ish tetrahedron. χ = 4 − 6 + 4 = 2.
 * ```
 *        3 (0,0,1)
 *        |
 *        0 ──── 1 (1,0,0)
 *       /
 *      2 (0,1,0)
 * ```
 * Volume 1/6 (the unit corner tetrahedron).
 */
export function tetrahedron(): MeshData {
  return mesh([0, 0, 0, 1, 0, 0, 0, 1, 0, 0, 0, 1], [0, 2, 1, 0, 1, 3, 0, 3, 2, 1, 2, 3]);
}

/** Octahedron with corners at ±1 on each axis. χ = 6 − 12 + 8 = 2; volume 4/3, area 4√3. */
export function octahedron(): MeshData {
  const p = [1, 0, 0, -1, 0, 0, 0, 1, 0, 0, -1, 0, 0, 0, 1, 0, 0, -1];
  // +x=0 −x=1 +y=2 −y=3 +z=4 −z=5; each face (x, y, z) of signs, wound outward.
  const t = [0, 2, 4, 4, 2, 1, 1, 2, 5, 5, 2, 0, 4, 3, 0, 1, 3, 4, 5, 3, 1, 0, 3, 5];
  return mesh(p, t);
}

/**
 * A closed cone: apex at `apex`, base ring of `n` vertices at height `apex.y + dir` with radius 0.5,
 * and the base capped by a fan around its centre. Vertex 0 is the apex.
 */
export function cone(apex: [number, number, number], dir: 1 | -1, n = 6): { positions: number[]; indices: number[] } {
  const pos = [...apex];
  const tri: number[] = [];
  for (let i = 0; i < n; i++) {
    const a = (2 * Math.PI * i) / n;
    pos.push(apex[0] + 0.5 * Math.cos(a), apex[1] + dir, apex[2] + 0.5 * Math.sin(a));
  }
  pos.push(apex[0], apex[1] + dir, apex[2]);
  const c = n + 1;
  for (let i = 0; i < n; i++) {
    const a = 1 + i, b = 1 + ((i + 1) % n);
    if (dir > 0) tri.push(0, a, b, b, a, c);
    else tri.push(0, b, a, a, b, c);
  }
  return { positions: pos, indices: tri };
}

/** Two closed cones touching at their shared apex (vertex 0): a bow-tie vertex, every edge still manifold. */
export function bowTie(): MeshData {
  const up = cone([0, 0, 0], 1);
  const down = cone([0, 0, 0], -1);
  const off = up.positions.length / 3 - 1; // down's vertices after its apex follow up's
  return mesh(
    [...up.positions, ...down.positions.slice(3)],
    [...up.indices, ...down.indices.map((v) => (v === 0 ? 0 : v + off))],
  );
}

/** `m` without triangle `t`: a hole. */
export function withHole(m: MeshData, t = 0): MeshData {
  const idx = [...m.indices];
  idx.splice(3 * t, 3);
  return { positions: m.positions, indices: Uint32Array.from(idx) };
}

/** `m` with triangle `t` added a second time. */
export function withDuplicate(m: MeshData, t = 0): MeshData {
  return { positions: m.positions, indices: Uint32Array.from([...m.indices, ...m.indices.subarray(3 * t, 3 * t + 3)]) };
}

/** `m` with triangle `t` wound the other way. */
export function withFlipped(m: MeshData, t = 0): MeshData {
  const idx = Uint32Array.from(m.indices);
  [idx[3 * t + 1], idx[3 * t + 2]] = [idx[3 * t + 2], idx[3 * t + 1]];
  return { positions: m.positions, indices: idx };
}

/** `m` with every triangle wound the other way (inside out). */
export function insideOut(m: MeshData): MeshData {
  const idx = Uint32Array.from(m.indices);
  for (let t = 0; t < idx.length; t += 3) [idx[t + 1], idx[t + 2]] = [idx[t + 2], idx[t + 1]];
  return { positions: m.positions, indices: idx };
}

/** Centroid of triangle `t` of `m`. */
export function centroidOf(m: MeshData, t: number): number[] {
  return [0, 1, 2].map((k) => (m.positions[3 * m.indices[3 * t] + k] + m.positions[3 * m.indices[3 * t + 1] + k] + m.positions[3 * m.indices[3 * t + 2] + k]) / 3);
}
