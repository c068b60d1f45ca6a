/**
 * Convex: every vertex of the mesh lies on or below the plane of every triangle (within
 * `tolerance`), planes oriented by the triangles' winding. For a closed, consistently wound mesh
 * this is the definition of a convex polytope's boundary (it is the intersection of the half-spaces
 * of its faces); it also rejects an inside-out hull, whose vertices all lie above its faces.
 * O(vertices × triangles), which is fine for collision hulls (hundreds of each).
 */
import type { MeshData } from '../types.js';

const NAME = 'isConvex';

/** Result of {@link isConvex}. */
export interface ConvexityResult {
  ok: boolean;
  /** Largest height of a vertex above a triangle's plane, metres (≤ 0 for a strictly convex mesh). */
  maxExcess: number;
  /** Up to five vertices that lie above some triangle's plane by more than the tolerance (positions, metres). */
  where: number[][];
}

/**
 * Checks that `mesh` is convex (see the file comment).
 * @param tolerance heights above a plane up to this count as on it, metres. Default 1e-7.
 * @example
 * const { ok, maxExcess } = isConvex(hull.mesh, 1e-7);
 */
export function isConvex(mesh: MeshData, tolerance = 1e-7): ConvexityResult {
  const { positions: p, indices: idx } = mesh;
  if (idx.length % 3 !== 0) throw new Error(`${NAME}: indices must hold 3 per triangle`);
  const V = p.length / 3;
  let maxExcess = -Infinity;
  const bad = new Set<number>();
  for (let t = 0; t < idx.length; t += 3) {
    const a = idx[t], b = idx[t + 1], c = idx[t + 2];
    const ux = p[3 * b] - p[3 * a], uy = p[3 * b + 1] - p[3 * a + 1], uz = p[3 * b + 2] - p[3 * a + 2];
    const vx = p[3 * c] - p[3 * a], vy = p[3 * c + 1] - p[3 * a + 1], vz = p[3 * c + 2] - p[3 * a + 2];
    let nx = uy * vz - uz * vy, ny = uz * vx - ux * vz, nz = ux * vy - uy * vx;
    const len = Math.hypot(nx, ny, nz);
    if (len === 0) continue;
    nx /= len;
    ny /= len;
    nz /= len;
    const d = nx * p[3 * a] + ny * p[3 * a + 1] + nz * p[3 * a + 2];
    for (let v = 0; v < V; v++) {
      const h = nx * p[3 * v] + ny * p[3 * v + 1] + nz * p[3 * v + 2] - d;
      if (h > maxExcess) maxExcess = h;
      if (h > tolerance && bad.size < 5) bad.add(v);
    }
  }
  const where = [...bad].map((v) => [p[3 * v], p[3 * v + 1], p[3 * v + 2]]);
  return { ok: bad.size === 0 && V > 0, maxExcess: V > 0 ? maxExcess : 0, where };
}
