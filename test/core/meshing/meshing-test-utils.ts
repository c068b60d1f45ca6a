/**
 * Geometry helpers for the meshing tests: rotations (Rodrigues' formula), closest points on
 * triangles (Ericson 2005, "Real-Time Collision Detection", §5.1.5), distances from points to a mesh
 * through a uniform grid of triangle boxes, and triangle normals.
 */
import type { MeshData } from '../../../core/types.js';

export type V3 = [number, number, number];

/** Row-major rotation matrix of `degrees` about `axis` (right-handed), Rodrigues' formula. */
export function rotationMatrix(axis: V3, degrees: number): number[] {
  const l = Math.hypot(...axis);
  const [x, y, z] = axis.map((a) => a / l);
  const t = (degrees * Math.PI) / 180;
  const c = Math.cos(t), s = Math.sin(t), k = 1 - c;
  return [c + x * x * k, x * y * k - z * s, x * z * k + y * s, y * x * k + z * s, c + y * y * k, y * z * k - x * s, z * x * k - y * s, z * y * k + x * s, c + z * z * k];
}
export const apply = (m: number[], p: V3): V3 => [m[0] * p[0] + m[1] * p[1] + m[2] * p[2], m[3] * p[0] + m[4] * p[1] + m[5] * p[2], m[6] * p[0] + m[7] * p[1] + m[8] * p[2]];
export const applyT = (m: number[], p: V3): V3 => [m[0] * p[0] + m[3] * p[1] + m[6] * p[2], m[1] * p[0] + m[4] * p[1] + m[7] * p[2], m[2] * p[0] + m[5] * p[1] + m[8] * p[2]];

export function vertex(mesh: MeshData, v: number): V3 {
  return [mesh.positions[3 * v], mesh.positions[3 * v + 1], mesh.positions[3 * v + 2]];
}

/** Unit normal of triangle t (float64 from the float32 positions), counter-clockwise. */
export function triangleNormal(mesh: MeshData, t: number): V3 {
  const [a, b, c] = [0, 1, 2].map((q) => vertex(mesh, mesh.indices[3 * t + q]));
  const u = [b[0] - a[0], b[1] - a[1], b[2] - a[2]], w = [c[0] - a[0], c[1] - a[1], c[2] - a[2]];
  const n: V3 = [u[1] * w[2] - u[2] * w[1], u[2] * w[0] - u[0] * w[2], u[0] * w[1] - u[1] * w[0]];
  const l = Math.hypot(...n);
  return [n[0] / l, n[1] / l, n[2] / l];
}

/** Angle between unit vectors, degrees. */
export function angleDeg(a: V3, b: V3): number {
  const d = Math.min(1, Math.max(-1, a[0] * b[0] + a[1] * b[1] + a[2] * b[2]));
  return (Math.acos(d) * 180) / Math.PI;
}

/** Squared distance from p to triangle (a, b, c): Ericson's closest-point-on-triangle by Voronoi regions. */
export function pointTriangleDistanceSq(p: V3, a: V3, b: V3, c: V3): number {
  const sub = (x: V3, y: V3): V3 => [x[0] - y[0], x[1] - y[1], x[2] - y[2]];
  const dot = (x: V3, y: V3) => x[0] * y[0] + x[1] * y[1] + x[2] * y[2];
  const ab = sub(b, a), ac = sub(c, a), ap = sub(p, a);
  const d1 = dot(ab, ap), d2 = dot(ac, ap);
  let q: V3;
  if (d1 <= 0 && d2 <= 0) q = a;
  else {
    const bp = sub(p, b);
    const d3 = dot(ab, bp), d4 = dot(ac, bp);
    if (d3 >= 0 && d4 <= d3) q = b;
    else {
      const vc = d1 * d4 - d3 * d2;
      if (vc <= 0 && d1 >= 0 && d3 <= 0) {
        const v = d1 / (d1 - d3);
        q = [a[0] + v * ab[0], a[1] + v * ab[1], a[2] + v * ab[2]];
      } else {
        const cp = sub(p, c);
        const d5 = dot(ab, cp), d6 = dot(ac, cp);
        if (d6 >= 0 && d5 <= d6) q = c;
        else {
          const vb = d5 * d2 - d1 * d6;
          if (vb <= 0 && d2 >= 0 && d6 <= 0) {
            const w = d2 / (d2 - d6);
            q = [a[0] + w * ac[0], a[1] + w * ac[1], a[2] + w * ac[2]];
          } else {
            const va = d3 * d6 - d5 * d4;
            if (va <= 0 && d4 - d3 >= 0 && d5 - d6 >= 0) {
              const w = (d4 - d3) / (d4 - d3 + (d5 - d6));
              q = [b[0] + w * (c[0] - b[0]), b[1] + w * (c[1] - b[1]), b[2] + w * (c[2] - b[2])];
            } else {
              const den = 1 / (va + vb + vc);
              const v = vb * den, w = vc * den;
              q = [a[0] + ab[0] * v + ac[0] * w, a[1] + ab[1] * v + ac[1] * w, a[2] + ab[2] * v + ac[2] * w];
            }
          }
        }
      }
    }
  }
  const d = sub(p, q);
  return dot(d, d);
}

/**
 * Distance from each point to the mesh (nearest triangle), searching triangles whose boxes lie within
 * `reach` metres of the point (points farther than `reach` from every triangle get Infinity).
 */
export function distancesToMesh(mesh: MeshData, points: V3[], reach: number): number[] {
  const cell = reach;
  const grid = new Map<string, number[]>();
  const T = mesh.indices.length / 3;
  for (let t = 0; t < T; t++) {
    const vs = [0, 1, 2].map((q) => vertex(mesh, mesh.indices[3 * t + q]));
    const lo = [0, 1, 2].map((d) => Math.floor(Math.min(...vs.map((v) => v[d])) / cell));
    const hi = [0, 1, 2].map((d) => Math.floor(Math.max(...vs.map((v) => v[d])) / cell));
    for (let x = lo[0]; x <= hi[0]; x++) for (let y = lo[1]; y <= hi[1]; y++) for (let z = lo[2]; z <= hi[2]; z++) {
      const key = `${x},${y},${z}`;
      let list = grid.get(key);
      if (!list) grid.set(key, (list = []));
      list.push(t);
    }
  }
  return points.map((p) => {
    const c = p.map((x) => Math.floor(x / cell));
    let best = Infinity;
    const seen = new Set<number>();
    for (let dx = -1; dx <= 1; dx++) for (let dy = -1; dy <= 1; dy++) for (let dz = -1; dz <= 1; dz++) {
      for (const t of grid.get(`${c[0] + dx},${c[1] + dy},${c[2] + dz}`) ?? []) {
        if (seen.has(t)) continue;
        seen.add(t);
        const [a, b, cc] = [0, 1, 2].map((q) => vertex(mesh, mesh.indices[3 * t + q]));
        best = Math.min(best, pointTriangleDistanceSq(p, a, b, cc));
      }
    }
    return Math.sqrt(best);
  });
}
