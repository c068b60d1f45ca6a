/**
 * The pair test of `findSelfIntersections`: do two triangles of one mesh cross or overlap, beyond a
 * distance tolerance ε, other than at the vertices they share by index? What counts is defined in
 * find-self-intersections.ts.
 *
 * Source: Möller 1997, "A fast triangle-triangle intersection test" (Journal of Graphics Tools 2(2)):
 * the plane-side rejections, the interval test on the line where the two planes meet, and a 2D test for
 * coplanar pairs.
 *
 * The common paths (plane sides, the interval test, a segment through a triangle) work on scalars in a
 * few scratch arrays and allocate nothing; the coplanar 2D tests, which real meshes rarely reach, use
 * small tuples. Every path does its arithmetic in the same order as the tuple-based version it replaced,
 * so the answers are the same to the last bit: the broad phase in find-self-intersections.ts relies on
 * that to keep its output unchanged. A crossing found within ε is then confirmed by exact orientation
 * tests (see crossingIsExact). Written for Fieldkiln; no library code.
 */

import { orient3d } from '../collision/orient3d.js';

/** Unit normals and offsets (n · x = d) of every triangle, 4 floats each, and which triangles have one. */
export interface TrianglePlanes {
  /** nx, ny, nz, d per triangle; a zero normal when the triangle has none. */
  planes: Float64Array;
  /** 1 when the triangle's normal has positive length, 0 for a degenerate (or non-finite) triangle. */
  hasNormal: Uint8Array;
}

/** The plane of every triangle of `I` (3 indices per triangle) over positions `P` (3 floats per vertex). */
export function trianglePlanes(P: Float32Array, I: Uint32Array, n: number): TrianglePlanes {
  const out = new Float64Array(4 * n);
  const hasNormal = new Uint8Array(n);
  for (let t = 0; t < n; t++) {
    const a = 3 * I[3 * t], b = 3 * I[3 * t + 1], c = 3 * I[3 * t + 2];
    const ux = P[b] - P[a], uy = P[b + 1] - P[a + 1], uz = P[b + 2] - P[a + 2];
    const vx = P[c] - P[a], vy = P[c + 1] - P[a + 1], vz = P[c + 2] - P[a + 2];
    let nx = uy * vz - uz * vy, ny = uz * vx - ux * vz, nz = ux * vy - uy * vx;
    // A square root, not Math.hypot (several times slower in V8): products of float32 coordinates can
    // neither overflow nor underflow float64 when squared.
    const l = Math.sqrt(nx * nx + ny * ny + nz * nz);
    if (l > 0) {
      nx /= l;
      ny /= l;
      nz /= l;
      hasNormal[t] = 1;
    }
    out[4 * t] = nx;
    out[4 * t + 1] = ny;
    out[4 * t + 2] = nz;
    out[4 * t + 3] = nx * P[a] + ny * P[a + 1] + nz * P[a + 2];
  }
  return { planes: out, hasNormal };
}

/**
 * The quick rejection of the pair test, without allocating: true when the triangles cannot intersect
 * because the vertices of one that it does not share with the other lie strictly on one side of the
 * other's plane (Möller's first step; for one shared vertex the two triangles then meet only there).
 * False means "run {@link trianglePairIntersects}". Symmetric in t and u.
 */
export function planesSeparate(P: Float32Array, I: Uint32Array, planes: Float64Array, t: number, u: number, eps: number): boolean {
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

// Scratch: the two triangles' corners, 3 floats each (triangle t at 0..8, u at 9..17), the two unit
// normals (t at 0, u at 3), the plane distances and projections of the interval test, and its result.
const W = new Float64Array(18);
const N = new Float64Array(6);
const DA = new Float64Array(3);
const DB = new Float64Array(3);
const PR = new Float64Array(3);
const SPAN = new Float64Array(4);
const TA = 0;
const TB = 9;

/**
 * The pair test, by how many vertex indices triangles t and u share (see find-self-intersections.ts).
 * Call it after {@link planesSeparate} said false. The answer may depend on which triangle is t; the
 * caller fixes the order.
 */
export function trianglePairIntersects(P: Float32Array, I: Uint32Array, tp: TrianglePlanes, t: number, u: number, eps: number): boolean {
  const t0 = I[3 * t], t1 = I[3 * t + 1], t2 = I[3 * t + 2];
  const u0 = I[3 * u], u1 = I[3 * u + 1], u2 = I[3 * u + 2];
  // Which corners of t appear in u, in corner order.
  let shared = 0, first = -1, second = -1;
  for (let p = 0; p < 3; p++) {
    const v = p === 0 ? t0 : p === 1 ? t1 : t2;
    if (v === u0 || v === u1 || v === u2) {
      if (shared === 0) first = p;
      else if (shared === 1) second = p;
      shared++;
    }
  }
  if (shared === 3) return true;
  if (!tp.hasNormal[t] || !tp.hasNormal[u]) return false; // a degenerate triangle has no interior
  for (let p = 0; p < 3; p++) {
    const a = 3 * (p === 0 ? t0 : p === 1 ? t1 : t2), b = 3 * (p === 0 ? u0 : p === 1 ? u1 : u2);
    W[TA + 3 * p] = P[a];
    W[TA + 3 * p + 1] = P[a + 1];
    W[TA + 3 * p + 2] = P[a + 2];
    W[TB + 3 * p] = P[b];
    W[TB + 3 * p + 1] = P[b + 1];
    W[TB + 3 * p + 2] = P[b + 2];
  }
  const pl = tp.planes;
  N[0] = pl[4 * t];
  N[1] = pl[4 * t + 1];
  N[2] = pl[4 * t + 2];
  N[3] = pl[4 * u];
  N[4] = pl[4 * u + 1];
  N[5] = pl[4 * u + 2];

  if (shared === 2) {
    const pa = 3 - first - second;
    const pb = u0 !== t0 && u0 !== t1 && u0 !== t2 ? 0 : u1 !== t0 && u1 !== t1 && u1 !== t2 ? 1 : 2;
    const s0 = TA + 3 * first, s1 = TA + 3 * second, a = TA + 3 * pa, b = TB + 3 * pb;
    if (Math.abs(dotDiff(N, 0, W, b, s0)) > eps) return false;
    // Coplanar: folded onto each other when the third vertices lie on the same side of the shared edge.
    const ex = W[s1] - W[s0], ey = W[s1 + 1] - W[s0 + 1], ez = W[s1 + 2] - W[s0 + 2];
    const sideA = crossDot(ex, ey, ez, W[a] - W[s0], W[a + 1] - W[s0 + 1], W[a + 2] - W[s0 + 2], N, 0);
    const sideB = crossDot(ex, ey, ez, W[b] - W[s0], W[b + 1] - W[s0 + 1], W[b + 2] - W[s0 + 2], N, 0);
    return sideA * sideB > 0;
  }
  if (shared === 1) {
    const sa = first;
    const s = TA + 3 * sa;
    const oa0 = TA + 3 * ((sa + 1) % 3), oa1 = TA + 3 * ((sa + 2) % 3);
    const v = sa === 0 ? t0 : sa === 1 ? t1 : t2;
    const sb = u0 === v ? 0 : u1 === v ? 1 : 2;
    const ob0 = TB + 3 * ((sb + 1) % 3), ob1 = TB + 3 * ((sb + 2) % 3);
    const da0 = dotDiff(N, 0, W, ob0, s), da1 = dotDiff(N, 0, W, ob1, s);
    const db0 = dotDiff(N, 3, W, oa0, s), db1 = dotDiff(N, 3, W, oa1, s);
    // The other triangle's two free vertices strictly on one side of this plane: they meet only at s.
    if ((da0 > eps && da1 > eps) || (da0 < -eps && da1 < -eps)) return false;
    if ((db0 > eps && db1 > eps) || (db0 < -eps && db1 < -eps)) return false;
    return (segmentCrossesTriangle(oa0, oa1, TB, 3, eps) || segmentCrossesTriangle(ob0, ob1, TA, 0, eps)) && crossingIsExact(P, I, t, u);
  }
  return mollerIntersect(eps) && crossingIsExact(P, I, t, u);
}

/**
 * The confirmation of a crossing the tests above found within ε: true when an edge of one triangle passes
 * through the other's interior by exact orientation tests (orient3d.ts: exact for float32 coordinates),
 * or when the two are exactly coplanar (the 2D answer then stands). Nearly coplanar neighbours on a smooth
 * surface fooled the ε tests: a plane distance within ε is snapped to zero, and where the two planes meet
 * at a shallow angle that moves the line they share by ε / sin(angle), far more than ε. Found on the
 * depth-9 sphere_sdf.onnx mesh: 10 pairs of triangles in neighbouring cells, 36 µm apart (exact rational
 * arithmetic found no edge of either crossing the other), were reported as crossing. Only the pairs the ε
 * test accepts reach this, so it costs nothing on a clean mesh.
 */
function crossingIsExact(P: Float32Array, I: Uint32Array, t: number, u: number): boolean {
  const a = I[3 * t], b = I[3 * t + 1], c = I[3 * t + 2];
  const d = I[3 * u], e = I[3 * u + 1], f = I[3 * u + 2];
  if (orient3d(P, a, b, c, d) === 0 && orient3d(P, a, b, c, e) === 0 && orient3d(P, a, b, c, f) === 0) return true;
  return (
    pierces(P, a, b, d, e, f) || pierces(P, b, c, d, e, f) || pierces(P, c, a, d, e, f) ||
    pierces(P, d, e, a, b, c) || pierces(P, e, f, a, b, c) || pierces(P, f, d, a, b, c)
  );
}

/** Segment pq crosses the plane of triangle xyz strictly (ends strictly on opposite sides) through its open interior: exact. */
function pierces(P: Float32Array, p: number, q: number, x: number, y: number, z: number): boolean {
  const sp = orient3d(P, x, y, z, p), sq = orient3d(P, x, y, z, q);
  if (sp === 0 || sq === 0 || sp === sq) return false;
  // The line pq passes through the interior when the tetrahedra (p, q, x, y), (p, q, y, z), (p, q, z, x) share one orientation.
  const o1 = orient3d(P, p, q, x, y);
  return o1 !== 0 && orient3d(P, p, q, y, z) === o1 && orient3d(P, p, q, z, x) === o1;
}

/** n · (W[p] − W[o]) with n at N[no], in the order `dot(n, sub(p, o))` rounds. */
function dotDiff(n: Float64Array, no: number, w: Float64Array, p: number, o: number): number {
  return n[no] * (w[p] - w[o]) + n[no + 1] * (w[p + 1] - w[o + 1]) + n[no + 2] * (w[p + 2] - w[o + 2]);
}

/** (a × b) · n with n at N[no], in the order `dot(cross(a, b), n)` rounds. */
function crossDot(ax: number, ay: number, az: number, bx: number, by: number, bz: number, n: Float64Array, no: number): number {
  return (ay * bz - az * by) * n[no] + (az * bx - ax * bz) * n[no + 1] + (ax * by - ay * bx) * n[no + 2];
}

/** True when segment W[p]W[q] passes through the interior of the triangle at W[tri] (unit normal N[no]), beyond ε. */
function segmentCrossesTriangle(p: number, q: number, tri: number, no: number, eps: number): boolean {
  const dp = dotDiff(N, no, W, p, tri), dq = dotDiff(N, no, W, q, tri);
  if ((dp > eps && dq > eps) || (dp < -eps && dq < -eps)) return false;
  if (Math.abs(dp) <= eps && Math.abs(dq) <= eps) {
    const n = vecAt(N, no);
    const ax = dominantAxis(n[0], n[1], n[2]);
    const T = [vecAt(W, tri), vecAt(W, tri + 3), vecAt(W, tri + 6)];
    const T2 = T.map((v) => project(v, ax)) as [V2, V2, V2];
    return segmentCrossesTriangle2d(project(vecAt(W, p), ax), project(vecAt(W, q), ax), T2, eps);
  }
  const f = dp / (dp - dq);
  const x = W[p] + f * (W[q] - W[p]), y = W[p + 1] + f * (W[q + 1] - W[p + 1]), z = W[p + 2] + f * (W[q + 2] - W[p + 2]);
  // x strictly inside the triangle: beyond ε from every edge, on its inner side.
  for (let e = 0; e < 3; e++) {
    const a = tri + 3 * e, b = tri + 3 * ((e + 1) % 3);
    const abx = W[b] - W[a], aby = W[b + 1] - W[a + 1], abz = W[b + 2] - W[a + 2];
    const len = Math.hypot(abx, aby, abz);
    if (!(crossDot(abx, aby, abz, x - W[a], y - W[a + 1], z - W[a + 2], N, no) > eps * len)) return false;
  }
  return true;
}

/** Möller's test for triangles that share no vertex (corners in W, normals in N). */
function mollerIntersect(eps: number): boolean {
  for (let q = 0; q < 3; q++) {
    const d = dotDiff(N, 0, W, TB + 3 * q, TA);
    DB[q] = Math.abs(d) <= eps ? 0 : d;
  }
  if ((DB[0] > 0 && DB[1] > 0 && DB[2] > 0) || (DB[0] < 0 && DB[1] < 0 && DB[2] < 0)) return false;
  for (let q = 0; q < 3; q++) {
    const d = dotDiff(N, 3, W, TA + 3 * q, TB);
    DA[q] = Math.abs(d) <= eps ? 0 : d;
  }
  if ((DA[0] > 0 && DA[1] > 0 && DA[2] > 0) || (DA[0] < 0 && DA[1] < 0 && DA[2] < 0)) return false;
  if ((DB[0] === 0 && DB[1] === 0 && DB[2] === 0) || (DA[0] === 0 && DA[1] === 0 && DA[2] === 0)) {
    const A = [vecAt(W, TA), vecAt(W, TA + 3), vecAt(W, TA + 6)] as [Vec, Vec, Vec];
    const B = [vecAt(W, TB), vecAt(W, TB + 3), vecAt(W, TB + 6)] as [Vec, Vec, Vec];
    return coplanarIntersect(A, B, vecAt(N, 0), eps);
  }
  // D = na × nb, the direction of the planes' common line.
  const dx = N[1] * N[5] - N[2] * N[4], dy = N[2] * N[3] - N[0] * N[5], dz = N[0] * N[4] - N[1] * N[3];
  const ax = dominantAxis(dx, dy, dz);
  for (let q = 0; q < 3; q++) PR[q] = W[TA + 3 * q + ax];
  if (!interval(PR, DA, 0)) return false;
  for (let q = 0; q < 3; q++) PR[q] = W[TB + 3 * q + ax];
  if (!interval(PR, DB, 2)) return false;
  // Overlap of the two intervals on the line, in projected units (|D[ax]| ≥ |D| / √3 scales by at most √3).
  return Math.min(SPAN[1], SPAN[3]) - Math.max(SPAN[0], SPAN[2]) > eps;
}

/**
 * The interval a triangle cuts from the planes' common line, from projections p and plane distances d,
 * written to SPAN[at], SPAN[at + 1] (low, high); false when there is none.
 */
function interval(p: Float64Array, d: Float64Array, at: number): boolean {
  let k: number;
  if (d[0] * d[1] > 0) k = 2;
  else if (d[0] * d[2] > 0) k = 1;
  else if (d[1] * d[2] > 0 || d[0] !== 0) k = 0;
  else if (d[1] !== 0) k = 1;
  else if (d[2] !== 0) k = 2;
  else return false;
  const i = (k + 1) % 3, j = (k + 2) % 3;
  const ti = d[k] === d[i] ? p[i] : p[k] + ((p[i] - p[k]) * d[k]) / (d[k] - d[i]);
  const tj = d[k] === d[j] ? p[j] : p[k] + ((p[j] - p[k]) * d[k]) / (d[k] - d[j]);
  if (ti < tj) {
    SPAN[at] = ti;
    SPAN[at + 1] = tj;
  } else {
    SPAN[at] = tj;
    SPAN[at + 1] = ti;
  }
  return true;
}

function dominantAxis(nx: number, ny: number, nz: number): number {
  const x = Math.abs(nx), y = Math.abs(ny), z = Math.abs(nz);
  return x >= y && x >= z ? 0 : y >= z ? 1 : 2;
}

// The coplanar 2D tests, on small tuples.

type Vec = [number, number, number];
type V2 = [number, number];

function vecAt(a: Float64Array, o: number): Vec {
  return [a[o], a[o + 1], a[o + 2]];
}

/** Drops coordinate `ax`, keeping a right-handed order of the other two. */
function project(p: Vec, ax: number): V2 {
  return ax === 0 ? [p[1], p[2]] : ax === 1 ? [p[2], p[0]] : [p[0], p[1]];
}

/** Signed distance of c from the line through a and b (positive to the left), or 0 when a = b. */
function side2d(a: V2, b: V2, c: V2): number {
  const ex = b[0] - a[0], ey = b[1] - a[1];
  // Not Math.hypot: this is the coplanar test's inner step, and hypot made the whole search on the
  // depth-9 birdbath grid mesh (1.39M triangles, flat patches) 1.5–2.3× slower (6.2–6.6 s against 2.7–4.3 s).
  const len = Math.sqrt(ex * ex + ey * ey);
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
  const ax = dominantAxis(n[0], n[1], n[2]);
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
