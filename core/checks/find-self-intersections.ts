/**
 * Self-intersections: pairs of triangles of one mesh whose interiors cross or overlap, found with a
 * bounding volume hierarchy over the triangles and an exact-enough triangle-triangle test.
 *
 * Sources:
 * - Möller 1997, "A fast triangle-triangle intersection test" (Journal of Graphics Tools 2(2)): the
 *   plane-side rejections, the interval test on the line where the two planes meet, and a 2D test for
 *   coplanar pairs.
 * - The BVH: triangles sorted by the Morton code of their centroids and halved into ranges down to 4
 *   per leaf (the linear BVH of Lauterbach et al. 2009, "Fast BVH construction on GPUs"), boxes filled
 *   bottom-up; each leaf then walks the tree with its own box, and the triangle pairs of overlapping
 *   leaves are tested (Ericson 2005, "Real-Time Collision Detection", ch. 6).
 *   Written here rather than taken from a library: the packages at hand either only take closed,
 *   manifold input and do not report self-intersections (manifold-3d accepts self-intersecting meshes,
 *   DEPENDENCIES.md §6), or are renderer-side (three.js has no triangle-triangle BVH query); a
 *   build-and-query BVH over flat typed arrays is short, and keeps core free of new dependencies.
 *
 * What counts: two triangles intersect when they share a point that is not a vertex or edge they share
 * by index. In detail, with a distance tolerance ε (`tolerance` × the mesh's bounding-box diagonal):
 * - no shared vertex: their interiors cross or overlap by more than ε (touching within ε does not count);
 * - one shared vertex: one triangle's opposite edge passes through the other's interior (the two fold
 *   through each other at the vertex), or, when coplanar, they overlap there;
 * - a shared edge: they are coplanar within ε and lie on the same side of it (folded flat onto each other);
 * - all three vertices shared: a duplicate triangle.
 * Vertices at the same position with different indices are not treated as shared: triangles that meet
 * there count when they also cross or overlap beyond ε (a duplicate triangle over other vertices does).
 */
import type { MeshData } from '../types.js';

const NAME = 'findSelfIntersections';

/** Options for {@link findSelfIntersections}. */
export interface FindSelfIntersectionsOptions {
  /** Contact tolerance as a fraction of the bounding-box diagonal. Default: 1e-7. */
  tolerance?: number;
  /** Return at most this many pairs (the first in order). Default: Infinity. */
  limit?: number;
}

export const FIND_SELF_INTERSECTIONS_DEFAULTS = { tolerance: 1e-7, limit: Infinity };

const LEAF_SIZE = 4;

/**
 * Finds the intersecting triangle pairs of `mesh`.
 *
 * @param mesh - Positions (3 floats per vertex) and indices (3 per triangle).
 * @param options - See {@link FindSelfIntersectionsOptions}.
 * @returns Flat pairs of triangle indices `[a0, b0, a1, b1, ...]` with a < b, ordered by a then b; the
 *   number of intersecting pairs is `length / 2`.
 * @throws Error when the index count is not a multiple of 3 or an index is out of range.
 *
 * @example
 * const pairs = findSelfIntersections(mesh);
 * const selfIntersections = pairs.length / 2;
 */
export function findSelfIntersections(mesh: MeshData, options: FindSelfIntersectionsOptions = {}): number[] {
  const { positions: P, indices: I } = mesh;
  const tolerance = options.tolerance ?? FIND_SELF_INTERSECTIONS_DEFAULTS.tolerance;
  const limit = options.limit ?? FIND_SELF_INTERSECTIONS_DEFAULTS.limit;
  if (I.length % 3 !== 0) throw new Error(`${NAME}: index count ${I.length} is not a multiple of 3`);
  if (P.length % 3 !== 0) throw new Error(`${NAME}: position count ${P.length} is not a multiple of 3`);
  if (!(tolerance >= 0)) throw new Error(`${NAME}: tolerance must be non-negative (got ${tolerance})`);
  const V = P.length / 3;
  const n = I.length / 3;
  for (let q = 0; q < I.length; q++) if (I[q] >= V) throw new Error(`${NAME}: index ${I[q]} at ${q} is out of range (${V} vertices)`);
  const out: number[] = [];
  if (n < 2) return out;

  // Triangle boxes and centroids.
  const box = new Float64Array(6 * n);
  const cen = new Float64Array(3 * n);
  const all = [Infinity, Infinity, Infinity, -Infinity, -Infinity, -Infinity];
  for (let t = 0; t < n; t++) {
    for (let d = 0; d < 3; d++) {
      const a = P[3 * I[3 * t] + d], b = P[3 * I[3 * t + 1] + d], c = P[3 * I[3 * t + 2] + d];
      const lo = Math.min(a, b, c), hi = Math.max(a, b, c);
      box[6 * t + d] = lo;
      box[6 * t + 3 + d] = hi;
      cen[3 * t + d] = (a + b + c) / 3;
      if (lo < all[d]) all[d] = lo;
      if (hi > all[3 + d]) all[3 + d] = hi;
    }
  }
  const diag = Math.hypot(all[3] - all[0], all[4] - all[1], all[5] - all[2]);
  const eps = tolerance * diag;
  const bvh = buildBvh(box, cen, n, eps);
  const planes = trianglePlanes(P, I, n);

  // Each leaf walks the tree with its own box; leaf pairs are visited once (the other leaf's number
  // not below its own), then triangle pairs whose boxes overlap get the full test.
  const stack = new Int32Array(128);
  const pairs: number[] = [];
  for (const leaf of bvh.leaves) {
    const lb = 6 * leaf;
    const x0 = bvh.box[lb], y0 = bvh.box[lb + 1], z0 = bvh.box[lb + 2], x1 = bvh.box[lb + 3], y1 = bvh.box[lb + 4], z1 = bvh.box[lb + 5];
    const ls = bvh.start[leaf], le = ls + bvh.count[leaf];
    let sp = 0;
    stack[sp++] = 0;
    while (sp > 0) {
      const node = stack[--sp];
      const nb = 6 * node;
      if (bvh.box[nb] > x1 || bvh.box[nb + 1] > y1 || bvh.box[nb + 2] > z1 || bvh.box[nb + 3] < x0 || bvh.box[nb + 4] < y0 || bvh.box[nb + 5] < z0) continue;
      const left = bvh.left[node];
      if (left >= 0) {
        stack[sp++] = left;
        stack[sp++] = left + 1;
        continue;
      }
      if (node < leaf) continue;
      const ms = bvh.start[node], me = ms + bvh.count[node];
      for (let q = ms; q < me; q++) {
        const u = bvh.order[q];
        const ub = 6 * u;
        // The other leaf's triangle must reach this leaf's box at all.
        if (box[ub] > x1 || box[ub + 1] > y1 || box[ub + 2] > z1 || box[ub + 3] < x0 || box[ub + 4] < y0 || box[ub + 5] < z0) continue;
        for (let p = ls; p < (node === leaf ? q : le); p++) {
          const t = bvh.order[p];
          const tb = 6 * t;
          if (box[ub] > box[tb + 3] + eps || box[ub + 1] > box[tb + 4] + eps || box[ub + 2] > box[tb + 5] + eps) continue;
          if (box[ub + 3] < box[tb] - eps || box[ub + 4] < box[tb + 1] - eps || box[ub + 5] < box[tb + 2] - eps) continue;
          if (!planesSeparate(P, I, planes, t, u, eps) && trianglesIntersect(P, I, t, u, eps)) pairs.push(Math.min(t, u), Math.max(t, u));
        }
      }
    }
  }
  // Ordered by the first triangle, then the second.
  const order = Array.from({ length: pairs.length / 2 }, (_, q) => q).sort((a, b) => pairs[2 * a] - pairs[2 * b] || pairs[2 * a + 1] - pairs[2 * b + 1]);
  for (const q of order) {
    if (out.length / 2 >= limit) break;
    out.push(pairs[2 * q], pairs[2 * q + 1]);
  }
  return out;
}

/** Unit normal and offset (n · x = d) of every triangle, 4 floats each; a zero normal for a degenerate one. */
function trianglePlanes(P: Float32Array, I: Uint32Array, n: number): Float64Array {
  const out = new Float64Array(4 * n);
  for (let t = 0; t < n; t++) {
    const a = 3 * I[3 * t], b = 3 * I[3 * t + 1], c = 3 * I[3 * t + 2];
    const ux = P[b] - P[a], uy = P[b + 1] - P[a + 1], uz = P[b + 2] - P[a + 2];
    const vx = P[c] - P[a], vy = P[c + 1] - P[a + 1], vz = P[c + 2] - P[a + 2];
    let nx = uy * vz - uz * vy, ny = uz * vx - ux * vz, nz = ux * vy - uy * vx;
    const l = Math.hypot(nx, ny, nz);
    if (l > 0) {
      nx /= l;
      ny /= l;
      nz /= l;
    }
    out[4 * t] = nx;
    out[4 * t + 1] = ny;
    out[4 * t + 2] = nz;
    out[4 * t + 3] = nx * P[a] + ny * P[a + 1] + nz * P[a + 2];
  }
  return out;
}

/**
 * The quick rejections of the pair test, without allocating: true when the triangles cannot intersect
 * because the vertices of one that it does not share with the other lie strictly on one side of the
 * other's plane (Möller's first step; for one shared vertex the two triangles then meet only there).
 * False means "run the full test".
 */
function planesSeparate(P: Float32Array, I: Uint32Array, planes: Float64Array, t: number, u: number, eps: number): boolean {
  return oneSide(P, I, planes, t, u, eps) || oneSide(P, I, planes, u, t, eps);
}

/** The vertices of triangle u not shared with triangle t all lie beyond ε on one side of t's plane. */
function oneSide(P: Float32Array, I: Uint32Array, planes: Float64Array, t: number, u: number, eps: number): boolean {
  const nx = planes[4 * t], ny = planes[4 * t + 1], nz = planes[4 * t + 2], d = planes[4 * t + 3];
  if (nx === 0 && ny === 0 && nz === 0) return false;
  const t0 = I[3 * t], t1 = I[3 * t + 1], t2 = I[3 * t + 2];
  let above = 0, below = 0, free = 0;
  for (let q = 0; q < 3; q++) {
    const v = I[3 * u + q];
    if (v === t0 || v === t1 || v === t2) continue;
    free++;
    const dist = nx * P[3 * v] + ny * P[3 * v + 1] + nz * P[3 * v + 2] - d;
    if (dist > eps) above++;
    else if (dist < -eps) below++;
    else return false;
  }
  return free > 0 && (above === free || below === free);
}

interface Bvh {
  /** Node boxes, 6 per node (grown by ε). */
  box: Float64Array;
  /** First child (the second is next to it), or −1 for a leaf. */
  left: Int32Array;
  start: Int32Array;
  count: Int32Array;
  /** Triangle indices, leaves hold runs of it. */
  order: Uint32Array;
  /** The leaf nodes. */
  leaves: number[];
}

function buildBvh(box: Float64Array, cen: Float64Array, n: number, eps: number): Bvh {
  // Triangles in Morton order of their centroids (10 bits per axis), then halved into ranges.
  const lo = [Infinity, Infinity, Infinity], hi = [-Infinity, -Infinity, -Infinity];
  for (let t = 0; t < n; t++) {
    for (let d = 0; d < 3; d++) {
      const c = cen[3 * t + d];
      if (c < lo[d]) lo[d] = c;
      if (c > hi[d]) hi[d] = c;
    }
  }
  const scale = [0, 1, 2].map((d) => (hi[d] > lo[d] ? 1023 / (hi[d] - lo[d]) : 0));
  const order = new Uint32Array(n);
  const codes = new Float64Array(n);
  for (let t = 0; t < n; t++) {
    codes[t] = morton3(
      Math.floor((cen[3 * t] - lo[0]) * scale[0]),
      Math.floor((cen[3 * t + 1] - lo[1]) * scale[1]),
      Math.floor((cen[3 * t + 2] - lo[2]) * scale[2]),
    );
  }
  if (n <= 2 ** 23) {
    // code · n + t is exact below 2^53 and sorts by code, then index.
    const keys = new Float64Array(n);
    for (let t = 0; t < n; t++) keys[t] = codes[t] * n + t;
    keys.sort();
    for (let q = 0; q < n; q++) order[q] = keys[q] % n;
  } else {
    const idx = Array.from({ length: n }, (_, t) => t).sort((a, b) => codes[a] - codes[b] || a - b);
    for (let q = 0; q < n; q++) order[q] = idx[q];
  }

  const maxNodes = 2 * Math.ceil(n / 2) + 1;
  const left = new Int32Array(maxNodes).fill(-1);
  const start = new Int32Array(maxNodes);
  const count = new Int32Array(maxNodes);
  const leaves: number[] = [];
  let used = 1;
  const work: number[] = [0, 0, n];
  while (work.length > 0) {
    const end = work.pop()!, begin = work.pop()!, node = work.pop()!;
    start[node] = begin;
    count[node] = end - begin;
    if (end - begin <= LEAF_SIZE) {
      leaves.push(node);
      continue;
    }
    const mid = (begin + end) >> 1;
    const l = used;
    used += 2;
    left[node] = l;
    work.push(l, begin, mid, l + 1, mid, end);
  }
  // Boxes bottom-up: children are numbered after their parent.
  const nodeBox = new Float64Array(6 * used);
  for (let node = used - 1; node >= 0; node--) {
    const nb = 6 * node;
    const l = left[node];
    if (l >= 0) {
      for (let d = 0; d < 3; d++) {
        nodeBox[nb + d] = Math.min(nodeBox[6 * l + d], nodeBox[6 * (l + 1) + d]);
        nodeBox[nb + 3 + d] = Math.max(nodeBox[6 * l + 3 + d], nodeBox[6 * (l + 1) + 3 + d]);
      }
      continue;
    }
    for (let d = 0; d < 3; d++) {
      nodeBox[nb + d] = Infinity;
      nodeBox[nb + 3 + d] = -Infinity;
    }
    for (let q = start[node]; q < start[node] + count[node]; q++) {
      const t = order[q];
      for (let d = 0; d < 3; d++) {
        if (box[6 * t + d] < nodeBox[nb + d]) nodeBox[nb + d] = box[6 * t + d];
        if (box[6 * t + 3 + d] > nodeBox[nb + 3 + d]) nodeBox[nb + 3 + d] = box[6 * t + 3 + d];
      }
    }
    for (let d = 0; d < 3; d++) {
      nodeBox[nb + d] -= eps;
      nodeBox[nb + 3 + d] += eps;
    }
  }
  return { box: nodeBox, left, start, count, order, leaves };
}

/** Interleaves the bits of three 10-bit integers into a 30-bit Morton code. */
function morton3(x: number, y: number, z: number): number {
  return spread10(x) | (spread10(y) << 1) | (spread10(z) << 2);
}

/** Spreads the 10 low bits of v so that two zero bits separate each. */
function spread10(v: number): number {
  v &= 0x3ff;
  v = (v | (v << 16)) & 0x30000ff;
  v = (v | (v << 8)) & 0x300f00f;
  v = (v | (v << 4)) & 0x30c30c3;
  v = (v | (v << 2)) & 0x9249249;
  return v;
}

type Vec = [number, number, number];

function vtx(P: Float32Array, v: number): Vec {
  return [P[3 * v], P[3 * v + 1], P[3 * v + 2]];
}
const sub = (a: Vec, b: Vec): Vec => [a[0] - b[0], a[1] - b[1], a[2] - b[2]];
const dot = (a: Vec, b: Vec) => a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
const cross = (a: Vec, b: Vec): Vec => [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]];

/** Unit normal of triangle (a, b, c), or null when degenerate. */
function unitNormal(a: Vec, b: Vec, c: Vec): Vec | null {
  const n = cross(sub(b, a), sub(c, a));
  const l = Math.hypot(n[0], n[1], n[2]);
  return l > 0 ? [n[0] / l, n[1] / l, n[2] / l] : null;
}

/** The pair test, by how many vertex indices the triangles share (see the file header). */
function trianglesIntersect(P: Float32Array, I: Uint32Array, t: number, u: number, eps: number): boolean {
  const ta = [I[3 * t], I[3 * t + 1], I[3 * t + 2]];
  const tb = [I[3 * u], I[3 * u + 1], I[3 * u + 2]];
  const sharedA: number[] = [];
  for (let p = 0; p < 3; p++) if (tb.includes(ta[p])) sharedA.push(p);
  const A = ta.map((v) => vtx(P, v)) as [Vec, Vec, Vec];
  const B = tb.map((v) => vtx(P, v)) as [Vec, Vec, Vec];
  if (sharedA.length === 3) return true;
  const na = unitNormal(A[0], A[1], A[2]);
  const nb = unitNormal(B[0], B[1], B[2]);
  if (!na || !nb) return false; // a degenerate triangle has no interior
  if (sharedA.length === 2) {
    const pa = 3 - sharedA[0] - sharedA[1];
    const pb = [0, 1, 2].find((q) => !ta.includes(tb[q]))!;
    const s0 = A[sharedA[0]], s1 = A[sharedA[1]];
    if (Math.abs(dot(na, sub(B[pb], s0))) > eps) return false;
    // Coplanar: folded onto each other when the third vertices lie on the same side of the shared edge.
    const e = sub(s1, s0);
    const sideA = dot(cross(e, sub(A[pa], s0)), na);
    const sideB = dot(cross(e, sub(B[pb], s0)), na);
    return sideA * sideB > 0;
  }
  if (sharedA.length === 1) {
    const sa = sharedA[0];
    const s = A[sa];
    const oa = [A[(sa + 1) % 3], A[(sa + 2) % 3]];
    const sb = tb.indexOf(ta[sa]);
    const ob = [B[(sb + 1) % 3], B[(sb + 2) % 3]];
    const da = ob.map((p) => dot(na, sub(p, s)));
    const db = oa.map((p) => dot(nb, sub(p, s)));
    // The other triangle's two free vertices strictly on one side of this plane: they meet only at s.
    if ((da[0] > eps && da[1] > eps) || (da[0] < -eps && da[1] < -eps)) return false;
    if ((db[0] > eps && db[1] > eps) || (db[0] < -eps && db[1] < -eps)) return false;
    return segmentCrossesTriangle(oa[0], oa[1], B, nb, eps) || segmentCrossesTriangle(ob[0], ob[1], A, na, eps);
  }
  return mollerIntersect(A, B, na, nb, eps);
}

/** True when segment pq passes through the interior of triangle T (unit normal n), beyond ε. */
function segmentCrossesTriangle(p: Vec, q: Vec, T: [Vec, Vec, Vec], n: Vec, eps: number): boolean {
  const dp = dot(n, sub(p, T[0])), dq = dot(n, sub(q, T[0]));
  if ((dp > eps && dq > eps) || (dp < -eps && dq < -eps)) return false;
  if (Math.abs(dp) <= eps && Math.abs(dq) <= eps) {
    const ax = dominantAxis(n);
    const p2 = project(p, ax), q2 = project(q, ax);
    const T2 = T.map((v) => project(v, ax)) as [V2, V2, V2];
    return segmentCrossesTriangle2d(p2, q2, T2, eps);
  }
  const f = dp / (dp - dq);
  const x: Vec = [p[0] + f * (q[0] - p[0]), p[1] + f * (q[1] - p[1]), p[2] + f * (q[2] - p[2])];
  return strictlyInside3d(x, T, n, eps);
}

/** x (in T's plane) lies inside T by more than ε from every edge. */
function strictlyInside3d(x: Vec, T: [Vec, Vec, Vec], n: Vec, eps: number): boolean {
  for (let e = 0; e < 3; e++) {
    const a = T[e], b = T[(e + 1) % 3];
    const ab = sub(b, a);
    const len = Math.hypot(ab[0], ab[1], ab[2]);
    if (!(dot(cross(ab, sub(x, a)), n) > eps * len)) return false;
  }
  return true;
}

/** Möller's test for triangles that share no vertex. */
function mollerIntersect(A: [Vec, Vec, Vec], B: [Vec, Vec, Vec], na: Vec, nb: Vec, eps: number): boolean {
  const db = B.map((p) => {
    const d = dot(na, sub(p, A[0]));
    return Math.abs(d) <= eps ? 0 : d;
  });
  if ((db[0] > 0 && db[1] > 0 && db[2] > 0) || (db[0] < 0 && db[1] < 0 && db[2] < 0)) return false;
  const da = A.map((p) => {
    const d = dot(nb, sub(p, B[0]));
    return Math.abs(d) <= eps ? 0 : d;
  });
  if ((da[0] > 0 && da[1] > 0 && da[2] > 0) || (da[0] < 0 && da[1] < 0 && da[2] < 0)) return false;
  if (db[0] === 0 && db[1] === 0 && db[2] === 0) return coplanarIntersect(A, B, na, eps);
  if (da[0] === 0 && da[1] === 0 && da[2] === 0) return coplanarIntersect(A, B, na, eps);
  const D = cross(na, nb);
  const ax = dominantAxis(D);
  const ia = interval(A.map((p) => p[ax]), da);
  const ib = interval(B.map((p) => p[ax]), db);
  if (!ia || !ib) return false;
  // Overlap of the two intervals on the line, in projected units (|D[ax]| ≥ |D| / √3 scales by at most √3).
  return Math.min(ia[1], ib[1]) - Math.max(ia[0], ib[0]) > eps;
}

/** The interval a triangle cuts from the planes' common line, from projections p and plane distances d. */
function interval(p: number[], d: number[]): [number, number] | null {
  let k: number;
  if (d[0] * d[1] > 0) k = 2;
  else if (d[0] * d[2] > 0) k = 1;
  else if (d[1] * d[2] > 0 || d[0] !== 0) k = 0;
  else if (d[1] !== 0) k = 1;
  else if (d[2] !== 0) k = 2;
  else return null;
  const i = (k + 1) % 3, j = (k + 2) % 3;
  const ti = d[k] === d[i] ? p[i] : p[k] + ((p[i] - p[k]) * d[k]) / (d[k] - d[i]);
  const tj = d[k] === d[j] ? p[j] : p[k] + ((p[j] - p[k]) * d[k]) / (d[k] - d[j]);
  return ti < tj ? [ti, tj] : [tj, ti];
}

type V2 = [number, number];

function dominantAxis(n: Vec): number {
  const x = Math.abs(n[0]), y = Math.abs(n[1]), z = Math.abs(n[2]);
  return x >= y && x >= z ? 0 : y >= z ? 1 : 2;
}

/** Drops coordinate `ax`, keeping a right-handed order of the other two. */
function project(p: Vec, ax: number): V2 {
  return ax === 0 ? [p[1], p[2]] : ax === 1 ? [p[2], p[0]] : [p[0], p[1]];
}

/** Signed distance of c from the line through a and b (positive to the left), or 0 when a = b. */
function side2d(a: V2, b: V2, c: V2): number {
  const ex = b[0] - a[0], ey = b[1] - a[1];
  const len = Math.hypot(ex, ey);
  return len > 0 ? (ex * (c[1] - a[1]) - ey * (c[0] - a[0])) / len : 0;
}

function properCross2d(p: V2, q: V2, a: V2, b: V2, eps: number): boolean {
  const s1 = side2d(p, q, a), s2 = side2d(p, q, b);
  if (!((s1 > eps && s2 < -eps) || (s1 < -eps && s2 > eps))) return false;
  const s3 = side2d(a, b, p), s4 = side2d(a, b, q);
  return (s3 > eps && s4 < -eps) || (s3 < -eps && s4 > eps);
}

function strictlyInside2d(x: V2, T: [V2, V2, V2], eps: number): boolean {
  const o = side2d(T[0], T[1], T[2]) >= 0 ? 1 : -1;
  for (let e = 0; e < 3; e++) if (!(o * side2d(T[e], T[(e + 1) % 3], x) > eps)) return false;
  return true;
}

function segmentCrossesTriangle2d(p: V2, q: V2, T: [V2, V2, V2], eps: number): boolean {
  if (strictlyInside2d(p, T, eps) || strictlyInside2d(q, T, eps)) return true;
  const mid: V2 = [(p[0] + q[0]) / 2, (p[1] + q[1]) / 2];
  if (strictlyInside2d(mid, T, eps)) return true;
  for (let e = 0; e < 3; e++) if (properCross2d(p, q, T[e], T[(e + 1) % 3], eps)) return true;
  return false;
}

/** Coplanar triangles: an edge pair crosses properly, or a vertex or centroid of one lies inside the other. */
function coplanarIntersect(A: [Vec, Vec, Vec], B: [Vec, Vec, Vec], n: Vec, eps: number): boolean {
  const ax = dominantAxis(n);
  const a = A.map((p) => project(p, ax)) as [V2, V2, V2];
  const b = B.map((p) => project(p, ax)) as [V2, V2, V2];
  for (let i = 0; i < 3; i++) {
    for (let j = 0; j < 3; j++) if (properCross2d(a[i], a[(i + 1) % 3], b[j], b[(j + 1) % 3], eps)) return true;
  }
  for (let i = 0; i < 3; i++) if (strictlyInside2d(a[i], b, eps) || strictlyInside2d(b[i], a, eps)) return true;
  const ca: V2 = [(a[0][0] + a[1][0] + a[2][0]) / 3, (a[0][1] + a[1][1] + a[2][1]) / 3];
  const cb: V2 = [(b[0][0] + b[1][0] + b[2][0]) / 3, (b[0][1] + b[1][1] + b[2][1]) / 3];
  return strictlyInside2d(ca, b, eps) || strictlyInside2d(cb, a, eps);
}
