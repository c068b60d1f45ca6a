/**
 * Self-intersections: pairs of triangles of one mesh whose interiors cross or overlap, found with a
 * uniform grid over the triangles' boxes and an exact-enough triangle-triangle test
 * (triangle-pair-intersects.ts, after Möller 1997).
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
 * A pair is a candidate when its two triangle boxes overlap within ε.
 *
 * Broad phase: a uniform grid (Ericson 2005, "Real-Time Collision Detection", §7.1) whose cell is about
 * the mean triangle extent. Meshes from marching cubes and dual contouring, whose triangles are all
 * about one sampling cell in size, fill it evenly. Each triangle goes into every grid cell its box (grown
 * by a little more than 2ε) touches, and a pair is tested only in the grid cell that holds the low corner of the overlap of
 * the two boxes, so no pair is tested twice and no set of visited pairs is kept. Triangles with a
 * non-finite box are paired with every other triangle.
 *
 * Test order: the pair test can round differently when its two triangles swap, so each pair is tested
 * with the lower triangle index first, wherever it is met.
 *
 * Measured (node 20, on a shared 2-core machine, so figures vary by ±30%): on a 0.9M-triangle
 * marching-cubes torus at octree depth 9, an earlier linear BVH took 2.5–3.1 s, the grid 1.0–1.2 s with
 * the same output. On the 1.1M-triangle depth-9 sphere_sdf.onnx mesh (31.8M cell pairs, 26.3M passing
 * the home-cell test, 8.4M boxes overlapping), best of 6 alternating: 902 ms when the pair test read the
 * mesh's arrays for every overlapping pair and the pairs were ordered by the BVH's leaf rank (a Morton
 * sort, 90 ms); 732 ms with the plane-side rejection on the cell's copies and pairs ordered by index
 * (same pairs on six meshes, from 0 to 902,264 crossings). Sorting each cell's triangles by x to end
 * its loop early measured no faster (751 ms). Fresh memory is slow to first touch on that machine
 * (about 4 ms per MB), so boxes are float32 and the grid keeps 16-bit low corners.
 */
import type { MeshData } from '../types.js';
import { planesSeparate, trianglePairIntersects, trianglePlanes, type TrianglePlanes } from './triangle-pair-intersects.js';

const NAME = 'findSelfIntersections';

/** Options for {@link findSelfIntersections}. */
export interface FindSelfIntersectionsOptions {
  /** Contact tolerance as a fraction of the bounding-box diagonal. Default: 1e-7. */
  tolerance?: number;
  /** Return at most this many pairs (the first in order). Default: Infinity. */
  limit?: number;
}

export const FIND_SELF_INTERSECTIONS_DEFAULTS = { tolerance: 1e-7, limit: Infinity };

/**
 * Grid cell edge over the mean of the triangles' largest box extents, and at most this many grid cells
 * per triangle (the cell grows until the grid fits). On the torus above, 6.95M pairs overlap; pairs of
 * triangles sharing a grid cell: 21.8M with (1, 4), 19.9M with (1, 8), 26.3M with (2, 2). (1, 4) keeps
 * the cell table at 16 bytes per triangle.
 */
const CELL_PER_EXTENT = 1;
const MAX_CELLS_PER_TRIANGLE = 4;
/** At most this many (triangle, grid cell) entries per triangle on average (the cell doubles until they fit); 2.6 on the torus. */
const MAX_ENTRIES_PER_TRIANGLE = 16;

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

  const { box, all } = triangleBoxes(P, I, n);
  const diag = Math.hypot(all[3] - all[0], all[4] - all[1], all[5] - all[2]);
  const eps = tolerance * diag;
  const pt: PairTest = { P, I, box, planes: trianglePlanes(P, I, n), eps, pairs: [] };

  const finiteBounds = Number.isFinite(eps) && all.every((x) => Number.isFinite(x));
  // Triangles the grid cannot place: paired with every other triangle.
  const loose: number[] = [];
  const inGrid = new Uint8Array(n);
  for (let t = 0; t < n; t++) {
    let finite = finiteBounds;
    for (let k = 0; k < 6 && finite; k++) finite = Number.isFinite(box[6 * t + k]);
    if (finite) inGrid[t] = 1;
    else loose.push(t);
  }
  for (const g of loose) {
    for (let v = 0; v < n; v++) if (v !== g && (inGrid[v] || v > g)) testPair(pt, g, v);
  }
  if (loose.length < n) testGridPairs(pt, inGrid, n - loose.length, all);

  // Ordered by the first triangle, then the second.
  const pairs = pt.pairs;
  const m = pairs.length / 2;
  if (n < 2 ** 26) {
    // a · n + b is exact below 2^53 and sorts by a, then b.
    const keys = new Float64Array(m);
    for (let q = 0; q < m; q++) keys[q] = pairs[2 * q] * n + pairs[2 * q + 1];
    keys.sort();
    for (let q = 0; q < m && q < limit; q++) out.push(Math.floor(keys[q] / n), keys[q] % n);
  } else {
    const order = Array.from({ length: m }, (_, q) => q).sort((a, b) => pairs[2 * a] - pairs[2 * b] || pairs[2 * a + 1] - pairs[2 * b + 1]);
    for (let q = 0; q < m && q < limit; q++) out.push(pairs[2 * order[q]], pairs[2 * order[q] + 1]);
  }
  return out;
}

/**
 * Triangle boxes (6 floats each: low corner, high corner) and the box of them all. Float32 holds them
 * exactly, since every corner is a stored position; half the memory of float64 matters more than it
 * seems, as fresh pages are slow to first touch in some sandboxes (about 4 ms per MB measured here).
 */
function triangleBoxes(P: Float32Array, I: Uint32Array, n: number): { box: Float32Array; all: number[] } {
  const box = new Float32Array(6 * n);
  const all = [Infinity, Infinity, Infinity, -Infinity, -Infinity, -Infinity];
  for (let t = 0; t < n; t++) {
    const a = 3 * I[3 * t], b = 3 * I[3 * t + 1], c = 3 * I[3 * t + 2];
    for (let d = 0; d < 3; d++) {
      const pa = P[a + d], pb = P[b + d], pc = P[c + d];
      let lo = pa < pb ? pa : pb, hi = pa > pb ? pa : pb;
      if (pc < lo) lo = pc;
      if (pc > hi) hi = pc;
      if (pa !== pa || pb !== pb || pc !== pc) lo = hi = NaN; // as Math.min and Math.max give it
      box[6 * t + d] = lo;
      box[6 * t + 3 + d] = hi;
      if (lo < all[d]) all[d] = lo;
      if (hi > all[3 + d]) all[3 + d] = hi;
    }
  }
  return { box, all };
}

/** What the pair test needs, and the pairs found so far (flat, smaller index first). */
interface PairTest {
  P: Float32Array;
  I: Uint32Array;
  box: Float32Array;
  planes: TrianglePlanes;
  eps: number;
  pairs: number[];
}

/** Tests triangles a and b: their planes, then (the lower index first) their boxes within ε and the pair test. */
function testPair(pt: PairTest, a: number, b: number): void {
  if (!planesSeparate(pt.P, pt.I, pt.planes.planes, a, b, pt.eps)) testUnseparatedPair(pt, a, b);
}

/** {@link testPair} for a pair whose planes are known not to separate it (`planesSeparate` is symmetric). */
function testUnseparatedPair(pt: PairTest, a: number, b: number): void {
  const { box, eps } = pt;
  const t = a < b ? a : b, u = a < b ? b : a;
  const tb = 6 * t, ub = 6 * u;
  if (box[ub] > box[tb + 3] + eps || box[ub + 1] > box[tb + 4] + eps || box[ub + 2] > box[tb + 5] + eps) return;
  if (box[ub + 3] < box[tb] - eps || box[ub + 4] < box[tb + 1] - eps || box[ub + 5] < box[tb + 2] - eps) return;
  if (trianglePairIntersects(pt.P, pt.I, pt.planes, t, u, eps)) pt.pairs.push(t, u);
}

/**
 * Tests every pair of grid triangles (those marked in `inGrid`, `count` of them) whose boxes overlap
 * within ε, once each: in the grid cell that holds the low corner of the overlap of their boxes. Each
 * triangle is entered from the cell of its low corner to the cell of its high corner plus `pad`; pad
 * exceeds 2ε by a few roundings, so that every pair the exact test in {@link testPair} passes (in either
 * order, with the rounding of `lo − ε`) shares the cell of the overlap's low corner.
 */
function testGridPairs(pt: PairTest, inGrid: Uint8Array, count: number, all: number[]): void {
  const { box, eps } = pt;
  const n = inGrid.length;
  const span = [all[3] - all[0], all[4] - all[1], all[5] - all[2]];
  const pad = 2 * eps + Math.max(...all.map(Math.abs)) * 2 ** -50;
  let extent = 0;
  for (let t = 0; t < n; t++) {
    if (!inGrid[t]) continue;
    const b = 6 * t;
    extent += Math.max(box[b + 3] - box[b], box[b + 4] - box[b + 1], box[b + 5] - box[b + 2]);
  }
  let h = (CELL_PER_EXTENT * extent) / count;
  if (!(h > 0)) h = Math.max(...span) || 1;
  let dims = gridDims(span, h);
  while (dims[0] * dims[1] * dims[2] > MAX_CELLS_PER_TRIANGLE * count + 64) dims = gridDims(span, (h *= 1.25));
  // Each triangle's low grid corner, 3 per triangle; the high corner (of the box plus pad) is recomputed.
  const lo = new Uint16Array(3 * n);
  let entries = placeTriangles(box, inGrid, all, dims, h, pad, lo);
  while (entries > MAX_ENTRIES_PER_TRIANGLE * count && dims[0] * dims[1] * dims[2] > 1) {
    dims = gridDims(span, (h *= 2));
    entries = placeTriangles(box, inGrid, all, dims, h, pad, lo);
  }

  // Cells as runs of one flat entry list, triangles in index order within each: counted into
  // end[c + 1], summed, then filled through end[c], which leaves end[c] at the end of cell c.
  const [nx, ny, nz] = dims;
  const inv = 1 / h;
  const cellCount = nx * ny * nz;
  const end = new Int32Array(cellCount + 1);
  const list = new Int32Array(entries);
  for (let pass = 0; pass < 2; pass++) {
    for (let t = 0; t < n; t++) {
      if (!inGrid[t]) continue;
      const b = 3 * t, bb = 6 * t;
      const x1 = highCell(box[bb + 3], pad, all[0], inv, nx), y1 = highCell(box[bb + 4], pad, all[1], inv, ny), z1 = highCell(box[bb + 5], pad, all[2], inv, nz);
      for (let z = lo[b + 2]; z <= z1; z++) {
        for (let y = lo[b + 1]; y <= y1; y++) {
          for (let x = lo[b]; x <= x1; x++) {
            if (pass === 0) end[(z * ny + y) * nx + x + 1]++;
            else list[end[(z * ny + y) * nx + x]++] = t;
          }
        }
      }
    }
    if (pass === 0) for (let c = 0; c < cellCount; c++) end[c + 1] += end[c];
  }

  // Per cell, its triangles' boxes (grown by pad), which of their low corners lie in this cell's row,
  // column and layer, their vertex indices, planes and corners are copied side by side first: the pair
  // loop and the plane-side rejection then read only these, not the mesh's arrays at random places.
  let most = 0;
  for (let c = 0; c < cellCount; c++) most = Math.max(most, end[c] - (c === 0 ? 0 : end[c - 1]));
  const { P, I } = pt;
  const planes = pt.planes.planes;
  const cellBox = new Float64Array(6 * most);
  const cellHome = new Uint8Array(most);
  const cellVert = new Int32Array(3 * most);
  const cellPlane = new Float64Array(4 * most);
  const cellCorner = new Float64Array(9 * most);
  /** The vertices of cell triangle k not shared with cell triangle l all lie beyond ε on one side of l's plane (as `planesSeparate` tests it). */
  const oneSide = (l: number, k: number): boolean => {
    const lp = 4 * l, nx = cellPlane[lp], ny = cellPlane[lp + 1], nz = cellPlane[lp + 2], d = cellPlane[lp + 3];
    if (nx === 0 && ny === 0 && nz === 0) return false;
    const l0 = cellVert[3 * l], l1 = cellVert[3 * l + 1], l2 = cellVert[3 * l + 2];
    let above = 0, below = 0, free = 0;
    for (let q = 0; q < 3; q++) {
      const v = cellVert[3 * k + q];
      if (v === l0 || v === l1 || v === l2) continue;
      free++;
      const kc = 9 * k + 3 * q;
      const dist = nx * cellCorner[kc] + ny * cellCorner[kc + 1] + nz * cellCorner[kc + 2] - d;
      if (dist > eps) above++;
      else if (dist < -eps) below++;
      else return false;
    }
    return free > 0 && (above === free || below === free);
  };
  for (let z = 0, c = 0; z < nz; z++) {
    for (let y = 0; y < ny; y++) {
      for (let x = 0; x < nx; x++, c++) {
        const s = c === 0 ? 0 : end[c - 1], e = end[c];
        if (e - s < 2) continue;
        for (let i = s; i < e; i++) {
          const a = list[i], al = 3 * a, ab = 6 * a, k = i - s;
          cellHome[k] = (lo[al] === x ? 1 : 0) | (lo[al + 1] === y ? 2 : 0) | (lo[al + 2] === z ? 4 : 0);
          cellBox[6 * k] = box[ab] - pad;
          cellBox[6 * k + 1] = box[ab + 1] - pad;
          cellBox[6 * k + 2] = box[ab + 2] - pad;
          cellBox[6 * k + 3] = box[ab + 3] + pad;
          cellBox[6 * k + 4] = box[ab + 4] + pad;
          cellBox[6 * k + 5] = box[ab + 5] + pad;
          for (let q = 0; q < 3; q++) {
            const v = I[al + q];
            cellVert[3 * k + q] = v;
            cellCorner[9 * k + 3 * q] = P[3 * v];
            cellCorner[9 * k + 3 * q + 1] = P[3 * v + 1];
            cellCorner[9 * k + 3 * q + 2] = P[3 * v + 2];
          }
          for (let q = 0; q < 4; q++) cellPlane[4 * k + q] = planes[4 * a + q];
        }
        for (let i = 0; i < e - s; i++) {
          const hi = cellHome[i], ib = 6 * i;
          const x0 = cellBox[ib], y0 = cellBox[ib + 1], z0 = cellBox[ib + 2], x1 = cellBox[ib + 3], y1 = cellBox[ib + 4], z1 = cellBox[ib + 5];
          for (let j = i + 1; j < e - s; j++) {
            // The overlap's low corner is the larger of the two low corners (both at most this cell's),
            // so it lies in this cell when, on each axis, one of the two lies here.
            if ((hi | cellHome[j]) !== 7) continue;
            // A looser box test than the exact one (both grown by pad), in either order.
            const jb = 6 * j;
            if (cellBox[jb] > x1 || cellBox[jb + 1] > y1 || cellBox[jb + 2] > z1 || cellBox[jb + 3] < x0 || cellBox[jb + 4] < y0 || cellBox[jb + 5] < z0) continue;
            // Most neighbours part here, by their planes (as `planesSeparate` tests it, in either order).
            if (oneSide(i, j) || oneSide(j, i)) continue;
            testUnseparatedPair(pt, list[s + i], list[s + j]);
          }
        }
      }
    }
  }
}

/** Grid cells per axis for cell edge h over `span`, at most 2^16 (the low corners are 16-bit). */
function gridDims(span: number[], h: number): number[] {
  return span.map((s) => Math.max(1, Math.min(65535, Math.ceil(s / h))));
}

/** The grid cell, along one axis of `cells` from `origin`, of a box's high side `x` plus pad. */
function highCell(x: number, pad: number, origin: number, inv: number, cells: number): number {
  const u = Math.floor((x + pad - origin) * inv);
  return u < 0 ? 0 : u >= cells ? cells - 1 : u;
}

/** Fills each grid triangle's low grid corner (3 per triangle) and returns the number of (triangle, cell) entries. */
function placeTriangles(box: Float32Array, inGrid: Uint8Array, all: number[], dims: number[], h: number, pad: number, lo: Uint16Array): number {
  const inv = 1 / h;
  let entries = 0;
  for (let t = 0; t < inGrid.length; t++) {
    if (!inGrid[t]) continue;
    let cells = 1;
    for (let d = 0; d < 3; d++) {
      const l = Math.floor((box[6 * t + d] - all[d]) * inv);
      const cl = l < 0 ? 0 : l >= dims[d] ? dims[d] - 1 : l;
      lo[3 * t + d] = cl;
      cells *= highCell(box[6 * t + 3 + d], pad, all[d], inv, dims[d]) - cl + 1;
    }
    entries += cells;
  }
  return entries;
}
