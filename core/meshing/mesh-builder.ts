/**
 * Growable vertex and triangle buffers for the meshers, plus the triangulation of one cell polygon.
 *
 * Triangulation: each polygon is fanned from the vertex that maximizes the smallest triangle area,
 * among the fans whose diagonals leave the cell's faces. A diagonal joining two vertices of one face
 * (possible on a face with four crossings) would lie in that face, and the neighbour cell could pick
 * the same one: the edge would then carry four triangles. When every fan has such a diagonal, the
 * polygon is fanned around its centroid instead, a new vertex strictly inside the cell.
 */
import type { MeshData } from '../types.js';

/** Bit mask of the two faces that contain cell edge `e` (face 2a + side, see cell-loops.ts). */
const EDGE_FACES: readonly number[] = Array.from({ length: 12 }, (_, e) => {
  const a = e >> 2;
  const u = (a + 1) % 3;
  const v = (a + 2) % 3;
  return (1 << (2 * u + (e & 1))) | (1 << (2 * v + ((e >> 1) & 1)));
});

/**
 * Which fans may triangulate a polygon on cell edges `edges` (`n` of them): bit s is set when every
 * diagonal from vertex s joins two edges that share no cell face. Depends on the edges only, so callers
 * that meet the same loop often may compute it once.
 */
export function fanStarts(edges: ArrayLike<number>, n: number): number {
  let starts = 0;
  for (let s = 0; s < n; s++) {
    let inFace = false;
    for (let t = 2; t < n - 1; t++) if (EDGE_FACES[edges[s]] & EDGE_FACES[edges[(s + t) % n]]) inFace = true;
    if (!inFace) starts |= 1 << s;
  }
  return starts;
}

/** Corner coordinates of the polygon being fanned (a cell polygon has at most 12 corners). */
const FAN_XYZ = new Float64Array(36);

export class MeshBuilder {
  /**
   * Positions, stored as float32 as they are made: the mesh's own precision, and half the fresh memory of
   * float64 (new pages are dear: about 3 ms per MB on the 2-core VM). The fan choice in {@link addFan}
   * reads these rounded positions.
   */
  pos: Float32Array;
  idx: Uint32Array;
  vertexCount = 0;
  indexCount = 0;

  constructor(expectedVertices = 1024) {
    this.pos = new Float32Array(Math.max(48, expectedVertices * 3));
    this.idx = new Uint32Array(Math.max(96, expectedVertices * 6));
  }

  addVertex(x: number, y: number, z: number): number {
    if (this.vertexCount * 3 + 3 > this.pos.length) {
      const next = new Float32Array(this.pos.length * 2);
      next.set(this.pos);
      this.pos = next;
    }
    const o = this.vertexCount * 3;
    this.pos[o] = x;
    this.pos[o + 1] = y;
    this.pos[o + 2] = z;
    return this.vertexCount++;
  }

  addTriangle(a: number, b: number, c: number): void {
    if (this.indexCount + 3 > this.idx.length) this.growIndices();
    const o = this.indexCount;
    this.idx[o] = a;
    this.idx[o + 1] = b;
    this.idx[o + 2] = c;
    this.indexCount = o + 3;
  }

  /**
   * Triangulates one polygon of `n` ≥ 4 vertices given {@link fanStarts} of its edges: the fan (or, for
   * a quad, the diagonal) whose smallest triangle is largest among the allowed ones, else a centroid fan.
   */
  addFan(starts: number, ids: ArrayLike<number>, n: number): void {
    if (n === 4 && (starts & 3) !== 0) {
      // Two ways to split a quad: diagonal 0–2 or 1–3. Keep the one off the cell faces whose smaller
      // triangle is larger (the same choice the general fan search below makes). The four corners are
      // read once into locals; each triangle's doubled area squared comes from cross2.
      const a = ids[0], b = ids[1], c = ids[2], d = ids[3];
      const p = this.pos;
      const ax = p[3 * a], ay = p[3 * a + 1], az = p[3 * a + 2];
      const bx = p[3 * b], by = p[3 * b + 1], bz = p[3 * b + 2];
      const cx = p[3 * c], cy = p[3 * c + 1], cz = p[3 * c + 2];
      const dx = p[3 * d], dy = p[3 * d + 1], dz = p[3 * d + 2];
      let s02 = -1, s13 = -1;
      if (starts & 1) s02 = Math.min(cross2(bx - ax, by - ay, bz - az, cx - ax, cy - ay, cz - az), cross2(cx - ax, cy - ay, cz - az, dx - ax, dy - ay, dz - az));
      if (starts & 2) s13 = Math.min(cross2(cx - bx, cy - by, cz - bz, dx - bx, dy - by, dz - bz), cross2(dx - bx, dy - by, dz - bz, ax - bx, ay - by, az - bz));
      if (this.indexCount + 6 > this.idx.length) this.growIndices();
      const o = this.indexCount, idx = this.idx;
      if (s02 >= s13) {
        idx[o] = a; idx[o + 1] = b; idx[o + 2] = c;
        idx[o + 3] = a; idx[o + 4] = c; idx[o + 5] = d;
      } else {
        idx[o] = b; idx[o + 1] = c; idx[o + 2] = d;
        idx[o + 3] = b; idx[o + 4] = d; idx[o + 5] = a;
      }
      this.indexCount = o + 6;
      return;
    }
    // The polygon's corners are read once into FAN_XYZ; each fan stops at its first triangle no larger
    // than the best fan's smallest so far (it cannot win then), which leaves the choice unchanged.
    const p = this.pos;
    for (let q = 0; q < n; q++) {
      const o = 3 * ids[q];
      FAN_XYZ[3 * q] = p[o];
      FAN_XYZ[3 * q + 1] = p[o + 1];
      FAN_XYZ[3 * q + 2] = p[o + 2];
    }
    let best = -1;
    let bestScore = -1;
    for (let s = 0; s < n; s++) {
      if (((starts >> s) & 1) === 0) continue;
      const sx = FAN_XYZ[3 * s], sy = FAN_XYZ[3 * s + 1], sz = FAN_XYZ[3 * s + 2];
      let worst = Infinity;
      for (let t = 1; t < n - 1 && worst > bestScore; t++) {
        let b = s + t, c = b + 1;
        if (b >= n) b -= n;
        if (c >= n) c -= n;
        const a2 = cross2(FAN_XYZ[3 * b] - sx, FAN_XYZ[3 * b + 1] - sy, FAN_XYZ[3 * b + 2] - sz, FAN_XYZ[3 * c] - sx, FAN_XYZ[3 * c + 1] - sy, FAN_XYZ[3 * c + 2] - sz);
        if (a2 < worst) worst = a2;
      }
      if (worst > bestScore) {
        bestScore = worst;
        best = s;
      }
    }
    if (best >= 0) {
      for (let t = 1; t < n - 1; t++) this.addTriangle(ids[best], ids[(best + t) % n], ids[(best + t + 1) % n]);
      return;
    }
    let cx = 0, cy = 0, cz = 0;
    for (let q = 0; q < n; q++) {
      cx += this.pos[3 * ids[q]];
      cy += this.pos[3 * ids[q] + 1];
      cz += this.pos[3 * ids[q] + 2];
    }
    const c = this.addVertex(cx / n, cy / n, cz / n);
    for (let t = 0; t < n; t++) this.addTriangle(c, ids[t], ids[(t + 1) % n]);
  }

  private growIndices(): void {
    const next = new Uint32Array(this.idx.length * 2);
    next.set(this.idx);
    this.idx = next;
  }

  /**
   * The mesh made so far. By default its arrays are views over the builder's buffers (no copy: the untouched
   * tail of an over-sized buffer costs address space, not memory); `copy` gives arrays of their own, for a
   * builder whose buffers will be reused.
   */
  toMesh(copy = false): MeshData {
    const positions = this.pos.subarray(0, this.vertexCount * 3), indices = this.idx.subarray(0, this.indexCount);
    return copy ? { positions: positions.slice(), indices: indices.slice() } : { positions, indices };
  }
}

/** |u × v|²: four times the squared area of the triangle spanned by u and v. */
function cross2(ux: number, uy: number, uz: number, vx: number, vy: number, vz: number): number {
  const x = uy * vz - uz * vy, y = uz * vx - ux * vz, z = ux * vy - uy * vx;
  return x * x + y * y + z * z;
}
