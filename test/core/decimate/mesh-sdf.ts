/**
 * A signed distance field of a triangle mesh, for tests: the magnitude is the distance to the
 * closest point of the mesh (three-mesh-bvh), the sign comes from the generalized winding number
 * (Jacobson, Kavan and Sorkine-Hornung 2013, "Robust inside-outside segmentation using generalized
 * winding numbers"): w(q) = Σ Ω_t(q) / 4π over the triangles, ≈ 1 inside and ≈ 0 outside even
 * for meshes with holes or flaws; inside where w > 1/2.
 *
 * Ω_t is the signed solid angle of triangle t seen from q (Van Oosterom and Strackee 1983,
 * "The solid angle of a plane triangle"). Far clusters of triangles are summed as one dipole,
 * N·(c − q) / |c − q|³ with N the cluster's area vector and c its centroid, the first-order
 * far-field term of Barill, Dickson, Schmidt, Levin and Jacobson 2018 ("Fast winding numbers for
 * soups and clouds"), used when |c − q| > β·r (β = 2, r the cluster's radius).
 */
import * as THREE from 'three';
import { MeshBVH } from 'three-mesh-bvh';
import type { Field } from '../../../core/fields/field.js';
import type { Bounds } from '../../../core/types.js';

interface Cluster {
  /** Area-weighted centroid and area vector (sum of ½ (b − a) × (c − a)). */
  c: [number, number, number];
  n: [number, number, number];
  r: number;
  tris?: number[];
  kids?: [Cluster, Cluster];
}

const BETA = 2;
const LEAF = 8;

export class WindingNumber {
  private readonly root: Cluster;
  constructor(private readonly p: Float32Array, private readonly idx: Uint32Array) {
    this.root = this.build([...Array(idx.length / 3).keys()]);
  }

  private build(tris: number[]): Cluster {
    const { p, idx } = this;
    const c = [0, 0, 0];
    const n = [0, 0, 0];
    let area = 0;
    const cent = (t: number, k: number) => (p[3 * idx[3 * t] + k] + p[3 * idx[3 * t + 1] + k] + p[3 * idx[3 * t + 2] + k]) / 3;
    for (const t of tris) {
      const [a, b, d] = [idx[3 * t], idx[3 * t + 1], idx[3 * t + 2]];
      const u = [0, 1, 2].map((k) => p[3 * b + k] - p[3 * a + k]);
      const v = [0, 1, 2].map((k) => p[3 * d + k] - p[3 * a + k]);
      const x = [u[1] * v[2] - u[2] * v[1], u[2] * v[0] - u[0] * v[2], u[0] * v[1] - u[1] * v[0]];
      const A = 0.5 * Math.hypot(x[0], x[1], x[2]);
      for (let k = 0; k < 3; k++) {
        n[k] += 0.5 * x[k];
        c[k] += A * cent(t, k);
      }
      area += A;
    }
    for (let k = 0; k < 3; k++) c[k] = area > 0 ? c[k] / area : cent(tris[0], k);
    let r = 0;
    for (const t of tris) for (let j = 0; j < 3; j++) r = Math.max(r, Math.hypot(...[0, 1, 2].map((k) => p[3 * idx[3 * t + j] + k] - c[k]) as [number, number, number]));
    const node: Cluster = { c: c as Cluster['c'], n: n as Cluster['n'], r };
    if (tris.length <= LEAF) {
      node.tris = tris;
      return node;
    }
    // Split at the median centroid along the widest axis.
    const lo = [Infinity, Infinity, Infinity], hi = [-Infinity, -Infinity, -Infinity];
    for (const t of tris) for (let k = 0; k < 3; k++) (lo[k] = Math.min(lo[k], cent(t, k))), (hi[k] = Math.max(hi[k], cent(t, k)));
    const axis = [0, 1, 2].reduce((a, k) => (hi[k] - lo[k] > hi[a] - lo[a] ? k : a), 0);
    const sorted = tris.slice().sort((s, t) => cent(s, axis) - cent(t, axis) || s - t);
    const mid = sorted.length >> 1;
    node.kids = [this.build(sorted.slice(0, mid)), this.build(sorted.slice(mid))];
    return node;
  }

  /** w(q) summed over every triangle exactly (no far-field terms), for checking {@link at}. */
  exact(qx: number, qy: number, qz: number): number {
    const all: Cluster = { c: [qx, qy, qz], n: [0, 0, 0], r: Infinity, tris: [...Array(this.idx.length / 3).keys()] };
    return this.sum(all, qx, qy, qz);
  }

  /** w(q): ≈ 1 inside, ≈ 0 outside (for an outward-wound mesh). */
  at(qx: number, qy: number, qz: number): number {
    return this.sum(this.root, qx, qy, qz);
  }

  private sum(root: Cluster, qx: number, qy: number, qz: number): number {
    const { p, idx } = this;
    let omega = 0;
    const stack: Cluster[] = [root];
    while (stack.length) {
      const node = stack.pop()!;
      const dx = node.c[0] - qx, dy = node.c[1] - qy, dz = node.c[2] - qz;
      const d = Math.hypot(dx, dy, dz);
      if (d > BETA * node.r) {
        omega += (node.n[0] * dx + node.n[1] * dy + node.n[2] * dz) / (d * d * d);
      } else if (node.tris) {
        for (const t of node.tris) {
          const a = 3 * idx[3 * t], b = 3 * idx[3 * t + 1], c = 3 * idx[3 * t + 2];
          const ax = p[a] - qx, ay = p[a + 1] - qy, az = p[a + 2] - qz;
          const bx = p[b] - qx, by = p[b + 1] - qy, bz = p[b + 2] - qz;
          const cx = p[c] - qx, cy = p[c + 1] - qy, cz = p[c + 2] - qz;
          const la = Math.hypot(ax, ay, az), lb = Math.hypot(bx, by, bz), lc = Math.hypot(cx, cy, cz);
          const det = ax * (by * cz - bz * cy) - ay * (bx * cz - bz * cx) + az * (bx * cy - by * cx);
          const den = la * lb * lc + (ax * bx + ay * by + az * bz) * lc + (ax * cx + ay * cy + az * cz) * lb + (bx * cx + by * cy + bz * cz) * la;
          omega += 2 * Math.atan2(det, den);
        }
      } else stack.push(...node.kids!);
    }
    return omega / (4 * Math.PI);
  }
}

/** The signed distance field of a mesh (see the file comment), as a Fieldkiln field; Lipschitz 1. */
export function meshSdfField(positions: Float32Array, indices: Uint32Array, bounds: Bounds, name = 'mesh-sdf'): Field & { bvh: MeshBVH } {
  const geom = new THREE.BufferGeometry();
  geom.setAttribute('position', new THREE.BufferAttribute(positions, 3));
  geom.setIndex(new THREE.BufferAttribute(indices.slice(), 1)); // a copy: MeshBVH reorders the index buffer in place
  const bvh = new MeshBVH(geom);
  const wn = new WindingNumber(positions, indices);
  const q = new THREE.Vector3();
  const hit = { point: new THREE.Vector3(), distance: 0, faceIndex: 0 };
  return {
    kind: 'sdf',
    bounds,
    defaultLevel: 0,
    hasColor: false,
    lipschitz: 1,
    description: { source: 'test', name, outputs: ['sdf'] },
    bvh,
    async evaluate(pts: Float32Array) {
      const out = new Float32Array(pts.length / 3);
      for (let i = 0; i < out.length; i++) {
        q.set(pts[3 * i], pts[3 * i + 1], pts[3 * i + 2]);
        bvh.closestPointToPoint(q, hit);
        out[i] = wn.at(q.x, q.y, q.z) > 0.5 ? -hit.distance : hit.distance;
      }
      return out;
    },
  };
}
