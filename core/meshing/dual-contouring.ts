/**
 * Dual contouring over the sparse surface cells found by the octree sampler: one vertex per surface
 * component of a cell, placed at the minimizer of the quadratic error function of that component's
 * Hermite planes, and one quad (two triangles) around every sign-changing lattice edge. Sharp edges
 * and corners of the field come out sharp, where marching cubes bevels them.
 *
 * Sources:
 * - Ju, Losasso, Schaefer, Warren 2002, "Dual Contouring of Hermite Data" (SIGGRAPH): Hermite data,
 *   the QEF vertex, quads around sign-changing edges.
 * - Schaefer, Ju, Warren 2007, "Manifold Dual Contouring" (IEEE TVCG): one vertex per surface
 *   component of a cell rather than one per cell, so the output is a 2-manifold.
 * - Lindstrom 2000, "Out-of-core simplification of large polygonal models": the truncated QEF solve
 *   about the mass point (`solve-qef.ts`).
 * - Nielson and Hamann 1991, "The asymptotic decider": face ambiguities, via `cell-loops.ts`.
 *
 * How it stays closed and manifold:
 * - Each cell's components are the surface loops of `cellLoops`, the same polygons marching cubes
 *   emits, with face ambiguities resolved identically by both cells sharing a face. Each crossing edge
 *   of a cell belongs to exactly one loop; the loop's vertex is the one the cell gives to the quad of
 *   that edge. The mesh is then the dual of the marching-cubes surface: a vertex per marching-cubes
 *   polygon, a quad per marching-cubes vertex, an edge per marching-cubes segment. Both have the same
 *   Euler characteristic, and the dual of a closed 2-manifold is one as long as no two polygons share
 *   two segments.
 * - Two polygons can share two segments: an ambiguous face whose two segments belong to one loop in
 *   each of the two cells beside it (a thin outside tunnel through the face, joined inside on both
 *   sides). Their quad edge would be used four times. For such a face every segment gets a vertex of its
 *   own on the face (the QEF of its two crossings' planes, restricted to the face), inserted between the
 *   two cell vertices in the two quads of the segment's ends. Those polygons are fanned from the
 *   inserted vertex, whose edges are all new.
 * - Quad diagonals join two cells that share only that lattice edge, so no diagonal repeats an edge.
 * - Vertices are kept `VERTEX_MARGIN` cell widths inside their cell, so vertices of different cells
 *   do not coincide; the two exceptions below (crease reach, claimed corners) move a vertex to a point
 *   no other cell's vertex takes.
 *
 * Vertex placement (cell units, about the mass point of the loop's crossings):
 * 1. The QEF minimizer, singular values below `singularCutoff` of the largest truncated, if it lies in
 *    the cell.
 * 2. A crease (rank 2) may end at a corner inside this cell whose third face crosses none of this cell's
 *    edges: the planes of the 3×3×3 block of cells around are added, and a rank-3 minimizer that lies in
 *    the cell with every plane within `CORNER_RMS` (RMS) is taken. If that corner lies instead in a
 *    neighbouring cell that has no vertex (all its corners outside: the corner pokes into it), the nearest
 *    crease vertex that found it moves there.
 * 3. Otherwise, when the minimizer left the cell: a small search among points on the surface the planes
 *    describe (see `constrainedVertex`): crossings, per-plane means, and the points of least error on
 *    every crease line (two planes' intersection), inside the cell, or for sharp creases (over 30°) up to
 *    `creaseReach` cell widths outside it. A vertex that left its cell must not pass a vertex of the
 *    neighbouring cell it moved toward; else it takes its best place inside its cell.
 * 4. Untangling (`untangle`): vertices of triangles that cross others go to their in-cell fallback,
 *    then to their loop's mass point, and their quads are split again, up to `UNTANGLE_ROUNDS` rounds.
 *
 * Splitting quads: of the two diagonals, the one that (1) folds fewer triangles (a triangle normal more
 * than 120° from the crossing's normal, or more than about 100° from the mean crossing normal of one of
 * its vertices), then (2) avoids a sliver (twice the area below 1e-3 of its longest edge squared), then,
 * for quads bent out of their plane by more than `diagonalTest` cell widths (the distance between the
 * two diagonals' midpoints along the quad's normal), (3) has its midpoint closer to the level by the
 * field's own value (2 extra evaluations per such quad, one batch), then (4) gives the flatter pair
 * (larger dot of the unit triangle normals). On a crease (3) picks the diagonal along the crease.
 *
 * Approaches that lost (rotated box of the tests at depth 6 unless named; figures are the worst vertex's
 * distance to the surface in cell widths h, and the worst flat-face triangle normal):
 * - Rank reduction (drop the weakest eigen-direction until the minimizer lies in the cell), then
 *   clamping: 0.41 h and 46°. With three equal eigenvalues the weakest direction is arbitrary, so the
 *   "crease" it leaves is no crease; and a crease passing just outside the cell gets clamped off it.
 *   The candidate search with crease reach: 0.0055 h and 0.46°.
 * - 4 root-finding steps: crossings near creases up to 0.05 h off, normals 2.7°. 8 steps: the figures
 *   above, for 0.2% more evaluations (converged edges stop).
 * - `singularCutoff` 0.3: 0.08 h and 9.6° (a crease cell with one crossing on one face and five on the
 *   other loses the crease).
 * - Crease reach for any crease line, without the 30° condition: 48 crossing triangle pairs on the
 *   shared torus_sdf.onnx at depth 6 (tangent planes of a curved surface make false creases); with it, 0.
 *   Without the neighbour veto: 14 pairs on the genus-2 slab of the tests; with it, 0.
 * - Fold test (1) against the crossing normal only: 6 crossing pairs on the box (a triangle lying in the
 *   bottom face but wound upward, while the crossing was on the side face); with the vertices' mean
 *   normals as well, 0. Against the edge direction instead: rejects the right diagonal on creases nearly
 *   parallel to the edge, whose triangles project to slivers along it.
 * - Bend (3) measured as the plain distance between the diagonals' midpoints: 3 800 of 4 990 quads went
 *   to the field test, flat ones included (a planar quad's diagonals need not share a midpoint); along
 *   the normal, 6.
 */
import type { Field } from '../fields/field.js';
import { signedFromValue } from '../fields/field.js';
import type { MeshData, ProgressFn } from '../types.js';
import { throwIfAborted } from '../types.js';
import { KeyMap } from '../sampling/key-map.js';
import { findSelfIntersections } from '../checks/find-self-intersections.js';
import type { SurfaceCells } from '../sampling/sample-octree.js';
import { cellLoops, EDGE_AXIS, EDGE_CORNERS, FACE_UV_CORNERS, insideJoined, isAmbiguousFace } from './cell-loops.js';
import { findHermiteData, HERMITE_DATA_DEFAULTS } from './hermite-data.js';
import { solveQef, SOLVE_QEF_DEFAULTS, type QefSolution } from './solve-qef.js';

const NAME = 'dualContour';

/**
 * A triangle folds over at a vertex when its normal makes more than acos(−0.2) ≈ 102° with the mean
 * of that vertex's crossing normals (on a crease or corner the mean is their bisector, which makes
 * under 90° with every face's normal).
 */
const VERTEX_FOLD = 0.2;

/** Untangling rounds (move, re-split, check) at most. */
const UNTANGLE_ROUNDS = 3;

/** Distance a vertex keeps from its cell's faces, in cell widths. */
export const VERTEX_MARGIN = 1e-3;

/** Options for {@link dualContour}. */
export interface DualContourOptions {
  /** Root-finding passes for the crossings (field evaluations per edge at most; edges stop once converged). Default: 8. */
  rootSteps?: number;
  /** Central-difference step for the normals, in cell widths. Default: 0.01. */
  gradientStep?: number;
  /** QEF singular values below this fraction of the largest are truncated. Default: 0.1. */
  singularCutoff?: number;
  /**
   * Quads bent out of their plane by more than this (distance between the midpoints of their two
   * diagonals along the quad's normal, in cell widths) pick their diagonal by the field's value at
   * those midpoints. Infinity turns the test off. Default: 0.05.
   */
  diagonalTest?: number;
  /**
   * How far outside its cell a vertex may sit on a crease that passes just outside the cell (its QEF
   * minimizer left the cell), in cell widths. 0 keeps every vertex in its cell. Default: 0.5.
   */
  creaseReach?: number;
  /**
   * Look for self-intersections (`findSelfIntersections`) and move the vertices of crossing triangles
   * to safer places (their in-cell fallback, then their crossings' mass point), re-splitting their
   * quads, for up to 3 rounds. The final count is `stats.selfIntersections`. Default: true.
   */
  untangle?: boolean;
  /** Points per `field.evaluate` call. Default: 1 048 576. */
  batchSize?: number;
  signal?: AbortSignal;
  /** Called with stage 'dual-contour' and a fraction 0..1. */
  onProgress?: ProgressFn;
}

export const DUAL_CONTOUR_DEFAULTS = {
  rootSteps: HERMITE_DATA_DEFAULTS.rootSteps,
  gradientStep: HERMITE_DATA_DEFAULTS.gradientStep,
  singularCutoff: SOLVE_QEF_DEFAULTS.singularCutoff,
  diagonalTest: 0.05,
  creaseReach: 0.5,
  untangle: true,
  batchSize: HERMITE_DATA_DEFAULTS.batchSize,
};

/** Figures of one {@link dualContour} run, for reports. */
export interface DualContourStats {
  /** Sign-changing lattice edges (one quad each). */
  crossings: number;
  /** Crossings placed on the bounds (surface capped there). */
  crossingsAtBounds: number;
  /** Cells that got more than one vertex (more than one surface component). */
  multiVertexCells: number;
  /** Faces where a vertex per segment was inserted to keep the mesh manifold. */
  splitFaces: number;
  /** Vertices whose QEF minimizer left the cell and that were placed by the constrained search. */
  constrained: number;
  /** Crease vertices moved to a corner found with the neighbouring cells' planes. */
  cornersFromNeighbours: number;
  /** Vertices placed outside their cell on a crease (`creaseReach`). */
  reached: number;
  /** Such placements given up because they would pass a neighbouring cell's vertex. */
  reachVetoed: number;
  /** Vertex moves made while untangling self-intersections. */
  untangled: number;
  /**
   * Intersecting triangle pairs in the result (`findSelfIntersections`), or −1 when not checked
   * (`untangle` off).
   */
  selfIntersections: number;
  /** Quads whose diagonal was picked by the field's value. */
  diagonalTests: number;
  /** Sign-changing edges with fewer than 4 surface cells around them (no quad; cannot happen for sampler output). */
  openEdges: number;
  /** Non-finite field values met while finding the Hermite data. */
  nonFinite: number;
  /** Normals that fell back to the edge direction. */
  normalFallbacks: number;
}

/** The result of {@link dualContour}. */
export interface DualContourResult {
  /** Positions (3 floats per vertex, metres) and indices (3 per triangle), counter-clockwise seen from outside. */
  mesh: MeshData;
  /** Field evaluations beyond the sampler's: root finding, gradients and diagonal tests. */
  extraEvaluations: number;
  stats: DualContourStats;
}

/**
 * Triangulates the surface cells by dual contouring, keeping sharp features, closed and 2-manifold.
 *
 * @param cells - The sampler's surface cells (signed corner values, negative inside).
 * @param field - The field the cells were sampled from; evaluated again for crossings, normals and
 *   diagonal tests (all counted in `extraEvaluations`).
 * @param options - See {@link DualContourOptions} and {@link DUAL_CONTOUR_DEFAULTS}.
 * @returns The mesh (indexed, no duplicate vertices), the extra evaluations and run figures.
 * @throws Error on misuse (options out of range, inconsistent cells).
 *
 * @example
 * const cells = await sampleOctree(field, { depth: 7 });
 * const { mesh, extraEvaluations } = await dualContour(cells, field);
 */
export async function dualContour(cells: SurfaceCells, field: Field, options: DualContourOptions = {}): Promise<DualContourResult> {
  const singularCutoff = options.singularCutoff ?? DUAL_CONTOUR_DEFAULTS.singularCutoff;
  const diagonalTest = options.diagonalTest ?? DUAL_CONTOUR_DEFAULTS.diagonalTest;
  const batchSize = options.batchSize ?? DUAL_CONTOUR_DEFAULTS.batchSize;
  const creaseReach = options.creaseReach ?? DUAL_CONTOUR_DEFAULTS.creaseReach;
  const untangle = options.untangle ?? DUAL_CONTOUR_DEFAULTS.untangle;
  if (!(creaseReach >= 0 && creaseReach <= 1)) throw new Error(`${NAME}: creaseReach must be from 0 to 1 cell widths (got ${creaseReach})`);
  if (!(singularCutoff > 0 && singularCutoff < 1)) throw new Error(`${NAME}: singularCutoff must be in (0, 1) (got ${singularCutoff})`);
  if (!(diagonalTest >= 0)) throw new Error(`${NAME}: diagonalTest must be a non-negative number of cell widths (got ${diagonalTest})`);
  const signal = options.signal;
  const progress = options.onProgress ?? (() => {});
  progress('dual-contour', 0);

  const herm = await findHermiteData(cells, field, {
    rootSteps: options.rootSteps,
    gradientStep: options.gradientStep,
    batchSize,
    signal,
  });
  throwIfAborted(signal);
  progress('dual-contour', 0.5);

  const { lattice, count: cellCount, coords, corners } = cells;
  const [nx, ny, nz] = lattice.cells;
  const h = lattice.cellSize;
  const [ox, oy, oz] = lattice.origin;
  const nodeKey = (i: number, j: number, k: number) => i + (nx + 1) * (j + (ny + 1) * k);
  const stats: DualContourStats = {
    crossings: herm.count,
    crossingsAtBounds: herm.atBounds,
    multiVertexCells: 0,
    splitFaces: 0,
    constrained: 0,
    cornersFromNeighbours: 0,
    reached: 0,
    reachVetoed: 0,
    untangled: 0,
    selfIntersections: untangle ? 0 : -1,
    diagonalTests: 0,
    openEdges: 0,
    nonFinite: herm.nonFinite,
    normalFallbacks: herm.normalFallbacks,
  };

  // 1. One vertex per loop of every cell; each crossing learns the vertex of each of its 4 cells.
  const pos = new Floats(cellCount * 3 + 16);
  /** Per vertex: the unit mean of its crossings' normals, for the fold test of the diagonal choice. */
  const meanNormals = new Floats(cellCount * 3 + 16);
  /** Per vertex, 6 floats: a safer alternative place (NaN when none) and its crossings' mass point, metres. */
  const safer = new Floats(cellCount * 6 + 16);
  const edgeSlots = new Int32Array(4 * herm.count).fill(-1);
  const v = new Float64Array(8);
  const lp: number[] = [];
  const ln: number[] = [];
  const loopOfEdge = new Int8Array(12);
  /** Faces (key 3 · nodeKey(min corner) + normal axis) whose two segments lie in one loop, per side. */
  const sameLoopFaces = new Map<number, { sides: number; segments: number[] }>();
  /** Vertices placed outside their cell on a crease: vertex id, cell index, in-cell fallback x, y, z (metres). */
  const reached: number[] = [];
  /** First vertex of each cell (its loops' vertices follow in order). */
  const firstVertex = new Int32Array(cellCount + 1);
  /** Corners found outside the claiming crease vertex's cell: vertex id, cell i, j, k, corner x, y, z (metres). */
  const claims: number[] = [];
  for (let c = 0; c < cellCount; c++) {
    if ((c & 0xffff) === 0) throwIfAborted(signal);
    const i = coords[3 * c], j = coords[3 * c + 1], k = coords[3 * c + 2];
    let mask = 0;
    for (let q = 0; q < 8; q++) {
      v[q] = corners[8 * c + q];
      if (v[q] < 0) mask |= 1 << q;
    }
    let faceBits = 0;
    let ambiguous = 0;
    for (let f = 0; f < 6; f++) {
      const fc = FACE_UV_CORNERS[f];
      if (!isAmbiguousFace(v[fc[0]] < 0, v[fc[1]] < 0, v[fc[2]] < 0, v[fc[3]] < 0)) continue;
      ambiguous |= 1 << f;
      if (insideJoined(v[fc[0]], v[fc[1]], v[fc[2]], v[fc[3]])) faceBits |= 1 << f;
    }
    const loops = cellLoops(mask, faceBits);
    firstVertex[c] = pos.length / 3;
    if (loops.length > 1) stats.multiVertexCells++;
    loopOfEdge.fill(-1);
    for (let L = 0; L < loops.length; L++) {
      const loop = loops[L];
      lp.length = 0;
      ln.length = 0;
      const vid = pos.length / 3;
      for (const e of loop) {
        loopOfEdge[e] = L;
        const x = herm.index.get(edgeKeyOf(c, e));
        if (Number.isNaN(x)) throw new Error(`${NAME}: crossing missing for a cell edge (inconsistent cells)`);
        lp.push((herm.points[3 * x] - ox) / h - i, (herm.points[3 * x + 1] - oy) / h - j, (herm.points[3 * x + 2] - oz) / h - k);
        ln.push(herm.normals[3 * x], herm.normals[3 * x + 1], herm.normals[3 * x + 2]);
        edgeSlots[4 * x + (e & 1) + 2 * ((e >> 1) & 1)] = vid;
      }
      const placed = placeVertex(lp, ln, v, singularCutoff, creaseReach, stats, () => blockPlanes(i, j, k), (corner) => {
        const ci = Math.floor(i + corner[0]), cj = Math.floor(j + corner[1]), ck = Math.floor(k + corner[2]);
        if (Math.abs(ci - i) > 1 || Math.abs(cj - j) > 1 || Math.abs(ck - k) > 1) return;
        claims.push(vid, ci, cj, ck, ox + h * (i + corner[0]), oy + h * (j + corner[1]), oz + h * (k + corner[2]));
      });
      const p = placed.position;
      pos.push3(ox + h * (i + p[0]), oy + h * (j + p[1]), oz + h * (k + p[2]));
      pushMeanNormal(ln);
      pushSafer(NaN, NaN, NaN, lp, i, j, k);
      if (p[0] < 0 || p[0] > 1 || p[1] < 0 || p[1] > 1 || p[2] < 0 || p[2] > 1) {
        const q = placed.inCell!;
        reached.push(vid, c, ox + h * (i + q[0]), oy + h * (j + q[1]), oz + h * (k + q[2]));
      }
    }
    // Ambiguous faces whose two segments sit in one loop of this cell.
    for (let f = 0; f < 6; f++) {
      if (!((ambiguous >> f) & 1)) continue;
      const fe = FACE_EDGES[f];
      const L = loopOfEdge[fe[0]];
      if (loopOfEdge[fe[1]] !== L || loopOfEdge[fe[2]] !== L || loopOfEdge[fe[3]] !== L) continue;
      const a = f >> 1, side = f & 1;
      const fkey = 3 * nodeKey(i + (a === 0 ? side : 0), j + (a === 1 ? side : 0), k + (a === 2 ? side : 0)) + a;
      let rec = sameLoopFaces.get(fkey);
      if (!rec) {
        // The two segments: consecutive loop edges that both lie on face f.
        const loop = loops[L];
        const segments: number[] = [];
        for (let q = 0; q < loop.length; q++) {
          const e0 = loop[q], e1 = loop[(q + 1) % loop.length];
          if (fe.includes(e0) && fe.includes(e1)) segments.push(edgeKeyOf(c, e0), edgeKeyOf(c, e1));
        }
        rec = { sides: 0, segments };
        sameLoopFaces.set(fkey, rec);
      }
      rec.sides++;
    }
  }

  /**
   * Hermite planes of the crossings on the edges of the 3×3×3 cells around cell (i, j, k), leaving out
   * the cell's own 12 edges; in the cell's local units.
   */
  function blockPlanes(i: number, j: number, k: number): { points: number[]; normals: number[] } {
    const out = { points: [] as number[], normals: [] as number[] };
    for (let c = k - 1; c <= k + 2; c++) {
      for (let b = j - 1; b <= j + 2; b++) {
        for (let a = i - 1; a <= i + 2; a++) {
          if (a < 0 || b < 0 || c < 0 || a > nx || b > ny || c > nz) continue;
          for (let axis = 0; axis < 3; axis++) {
            const ea = a + (axis === 0 ? 1 : 0), eb = b + (axis === 1 ? 1 : 0), ec = c + (axis === 2 ? 1 : 0);
            if (ea > i + 2 || eb > j + 2 || ec > k + 2 || ea > nx || eb > ny || ec > nz) continue;
            // Own edges: both ends on the cell's nodes.
            if (a >= i && a <= i + 1 && b >= j && b <= j + 1 && c >= k && c <= k + 1 && ea <= i + 1 && eb <= j + 1 && ec <= k + 1) continue;
            const x = herm.index.get(3 * nodeKey(a, b, c) + axis);
            if (Number.isNaN(x)) continue;
            out.points.push((herm.points[3 * x] - ox) / h - i, (herm.points[3 * x + 1] - oy) / h - j, (herm.points[3 * x + 2] - oz) / h - k);
            out.normals.push(herm.normals[3 * x], herm.normals[3 * x + 1], herm.normals[3 * x + 2]);
          }
        }
      }
    }
    return out;
  }

  /**
   * Appends the next vertex's safer places for untangling: an alternative (NaN when none yet) and
   * the mass point of its crossings `local` (cell units relative to cell (i, j, k)), in metres.
   */
  function pushSafer(ax: number, ay: number, az: number, local: number[], i: number, j: number, k: number): void {
    let x = 0, y = 0, z = 0;
    const m = local.length / 3;
    for (let q = 0; q < local.length; q += 3) {
      x += local[q];
      y += local[q + 1];
      z += local[q + 2];
    }
    safer.push3(ax, ay, az);
    safer.push3(ox + h * (i + x / m), oy + h * (j + y / m), oz + h * (k + z / m));
  }

  /** Appends the unit mean of `normals` (3 floats each) as the next vertex's normal (zero if they cancel). */
  function pushMeanNormal(normals: number[]): void {
    let x = 0, y = 0, z = 0;
    for (let q = 0; q < normals.length; q += 3) {
      x += normals[q];
      y += normals[q + 1];
      z += normals[q + 2];
    }
    const l = Math.hypot(x, y, z);
    if (l > 0) meanNormals.push3(x / l, y / l, z / l);
    else meanNormals.push3(0, 0, 0);
  }

  /** Lattice edge key of local edge `e` of cell `c`. */
  function edgeKeyOf(c: number, e: number): number {
    const c0 = EDGE_CORNERS[e][0];
    return 3 * nodeKey(coords[3 * c] + (c0 & 1), coords[3 * c + 1] + ((c0 >> 1) & 1), coords[3 * c + 2] + ((c0 >> 2) & 1)) + EDGE_AXIS[e];
  }

  firstVertex[cellCount] = pos.length / 3;
  const surfaceCell = new KeyMap(reached.length + claims.length > 0 ? cellCount : 1);
  if (reached.length + claims.length > 0) {
    for (let c = 0; c < cellCount; c++) surfaceCell.set(coords[3 * c] + nx * (coords[3 * c + 1] + ny * coords[3 * c + 2]), c);
  }

  // 1b. A vertex that left its cell must not pass the vertices of the cells it moved toward (along each
  // axis it left by); else it falls back to its best place inside its cell. This keeps the order of
  // vertices along a crease, so the strip of quads along it cannot fold.
  const firstPositions = reached.length > 0 ? pos.data.slice(0, pos.length) : pos.data;
  for (let q = 0; q < reached.length; q += 5) {
    const vid = reached[q], c = reached[q + 1];
    const cell = [coords[3 * c], coords[3 * c + 1], coords[3 * c + 2]];
    const exit = [0, 0, 0];
    for (let d = 0; d < 3; d++) {
      const local = (firstPositions[3 * vid + d] - lattice.origin[d]) / h - cell[d];
      exit[d] = local < 0 ? -1 : local > 1 ? 1 : 0;
    }
    let veto = false;
    for (let o = 1; o < 8 && !veto; o++) {
      const off = [o & 1 ? exit[0] : 0, o & 2 ? exit[1] : 0, o & 4 ? exit[2] : 0];
      if ((o & 1 && !exit[0]) || (o & 2 && !exit[1]) || (o & 4 && !exit[2])) continue;
      const ni = cell[0] + off[0], nj = cell[1] + off[1], nk = cell[2] + off[2];
      if (ni < 0 || nj < 0 || nk < 0 || ni >= nx || nj >= ny || nk >= nz) continue;
      const nc = surfaceCell.get(ni + nx * (nj + ny * nk));
      if (Number.isNaN(nc)) continue;
      for (let w = firstVertex[nc]; w < firstVertex[nc + 1] && !veto; w++) {
        for (let d = 0; d < 3; d++) {
          // Leaving by the low side (off −1), the vertex must stay above the neighbour's vertex, and so on.
          if (off[d] !== 0 && (firstPositions[3 * vid + d] - firstPositions[3 * w + d]) * -off[d] <= 0) veto = true;
        }
      }
    }
    if (veto) {
      pos.data[3 * vid] = reached[q + 2];
      pos.data[3 * vid + 1] = reached[q + 3];
      pos.data[3 * vid + 2] = reached[q + 4];
      stats.reachVetoed++;
    } else {
      safer.data[6 * vid] = reached[q + 2];
      safer.data[6 * vid + 1] = reached[q + 3];
      safer.data[6 * vid + 2] = reached[q + 4];
      stats.reached++;
    }
  }

  // 1c. Corners in cells without a vertex (no corner of the cell inside): the nearest claiming crease vertex moves there.
  if (claims.length > 0) {
    const winner = new Map<number, number>(); // cell key → claim offset
    for (let q = 0; q < claims.length; q += 7) {
      const [vid, ci, cj, ck] = [claims[q], claims[q + 1], claims[q + 2], claims[q + 3]];
      if (ci < 0 || cj < 0 || ck < 0 || ci >= nx || cj >= ny || ck >= nz) continue;
      const key = ci + nx * (cj + ny * ck);
      if (surfaceCell.has(key)) continue;
      const dist = Math.hypot(pos.data[3 * vid] - claims[q + 4], pos.data[3 * vid + 1] - claims[q + 5], pos.data[3 * vid + 2] - claims[q + 6]);
      const prev = winner.get(key);
      if (prev === undefined) winner.set(key, q);
      else {
        const pv = claims[prev];
        const pd = Math.hypot(pos.data[3 * pv] - claims[prev + 4], pos.data[3 * pv + 1] - claims[prev + 5], pos.data[3 * pv + 2] - claims[prev + 6]);
        if (dist < pd) winner.set(key, q);
      }
    }
    for (const q of winner.values()) {
      const vid = claims[q];
      for (let d = 0; d < 3; d++) safer.data[6 * vid + d] = pos.data[3 * vid + d];
      pos.data[3 * vid] = claims[q + 4];
      pos.data[3 * vid + 1] = claims[q + 5];
      pos.data[3 * vid + 2] = claims[q + 6];
      stats.cornersFromNeighbours++;
    }
  }

  // 2. A vertex per segment on faces shared by one loop on both sides.
  const splitFace = new Map<number, { edges: number[]; verts: number[] }>();
  for (const [fkey, rec] of sameLoopFaces) {
    if (rec.sides !== 2 || rec.segments.length !== 4) continue;
    const a = fkey % 3;
    const nk = Math.floor(fkey / 3);
    const fi = nk % (nx + 1), fj = Math.floor(nk / (nx + 1)) % (ny + 1), fk = Math.floor(nk / ((nx + 1) * (ny + 1)));
    const verts: number[] = [];
    for (let s = 0; s < 2; s++) {
      lp.length = 0;
      ln.length = 0;
      for (let q = 0; q < 2; q++) {
        const x = herm.index.get(rec.segments[2 * s + q]);
        const local = [(herm.points[3 * x] - ox) / h - fi, (herm.points[3 * x + 1] - oy) / h - fj, (herm.points[3 * x + 2] - oz) / h - fk];
        const nrm = [herm.normals[3 * x], herm.normals[3 * x + 1], herm.normals[3 * x + 2]];
        local[a] = 0;
        nrm[a] = 0;
        const len = Math.hypot(nrm[0], nrm[1], nrm[2]);
        lp.push(...local);
        if (len > 1e-6) ln.push(nrm[0] / len, nrm[1] / len, nrm[2] / len);
        else ln.push(0, 0, 0);
      }
      const sol = solveQef(lp, ln, { singularCutoff });
      const p = sol.point;
      p[a] = 0;
      for (let d = 0; d < 3; d++) if (d !== a) p[d] = Math.min(1 - VERTEX_MARGIN, Math.max(VERTEX_MARGIN, p[d]));
      verts.push(pos.length / 3);
      pushMeanNormal(ln);
      pushSafer(NaN, NaN, NaN, lp, fi, fj, fk);
      pos.push3(ox + h * (fi + p[0]), oy + h * (fj + p[1]), oz + h * (fk + p[2]));
    }
    splitFace.set(fkey, { edges: rec.segments, verts });
    stats.splitFaces++;
  }
  const positions = new Float32Array(pos.data.subarray(0, pos.length));
  const saferPlaces = safer.data;

  // 3. Polygons around the crossings: quads (split below), and fans where segment vertices were inserted.
  const quads: number[] = [];
  const quadCrossing: number[] = [];
  const fans: number[] = [];
  const poly: number[] = [];
  for (let x = 0; x < herm.count; x++) {
    const s0 = edgeSlots[4 * x], s1 = edgeSlots[4 * x + 1], s2 = edgeSlots[4 * x + 2], s3 = edgeSlots[4 * x + 3];
    if (s0 < 0 || s1 < 0 || s2 < 0 || s3 < 0) {
      stats.openEdges++;
      continue;
    }
    // Counter-clockwise around +axis: slots 0, 1, 3, 2; reversed when the outside is at the lower end.
    const ccw = herm.lowerInside[x] === 1;
    if (splitFace.size > 0 && insertSegmentVertices(x, ccw, poly)) {
      fanFromFirstInserted(poly, fans);
      continue;
    }
    quads.push(s0, ccw ? s1 : s2, s3, ccw ? s2 : s1);
    quadCrossing.push(x);
  }
  const quadCount = quadCrossing.length;
  const choice = new Int8Array(quadCount);

  // 4. Diagonals, with the field-value tests of all undecided quads in one batch.
  let diagonalEvaluations = 0;
  const quad = [0, 0, 0, 0];
  async function decide(list: Iterable<number>): Promise<void> {
    const pending: number[] = [];
    for (const q of list) {
      for (let t = 0; t < 4; t++) quad[t] = quads[4 * q + t];
      const c = chooseDiagonal(quadCrossing[q], quad, null);
      if (c === -1) pending.push(q);
      else choice[q] = c;
    }
    if (pending.length === 0) return;
    const pts = new Float32Array(pending.length * 6);
    for (let r = 0; r < pending.length; r++) {
      const o = 4 * pending[r];
      for (let t = 0; t < 3; t++) {
        pts[6 * r + t] = 0.5 * (positions[3 * quads[o] + t] + positions[3 * quads[o + 2] + t]);
        pts[6 * r + 3 + t] = 0.5 * (positions[3 * quads[o + 1] + t] + positions[3 * quads[o + 3] + t]);
      }
    }
    const vals = new Float64Array(pending.length * 2);
    for (let start = 0; start < pending.length * 2; start += batchSize) {
      throwIfAborted(signal);
      const cnt = Math.min(batchSize, pending.length * 2 - start);
      const out = await field.evaluate(pts.subarray(3 * start, 3 * (start + cnt)), signal);
      if (out.length !== cnt) throw new Error(`${NAME}: field returned ${out.length} values for ${cnt} points`);
      for (let r = 0; r < cnt; r++) vals[start + r] = Number.isFinite(out[r]) ? signedFromValue(field.kind, out[r], cells.level) : NaN;
      diagonalEvaluations += cnt;
    }
    stats.diagonalTests += pending.length;
    for (let r = 0; r < pending.length; r++) {
      const q = pending[r];
      for (let t = 0; t < 4; t++) quad[t] = quads[4 * q + t];
      const c = chooseDiagonal(quadCrossing[q], quad, [vals[2 * r], vals[2 * r + 1]]);
      choice[q] = c === -1 ? 0 : c;
    }
  }
  await decide(Array.from({ length: quadCount }, (_, q) => q));
  const indices = new Uint32Array(6 * quadCount + fans.length);
  const emit = () => {
    for (let q = 0; q < quadCount; q++) {
      const o = 4 * q, t = 6 * q;
      const a = quads[o], b = quads[o + 1], c = quads[o + 2], d = quads[o + 3];
      indices[t] = a;
      indices[t + 1] = b;
      indices[t + 2] = choice[q] === 0 ? c : d;
      indices[t + 3] = choice[q] === 0 ? a : b;
      indices[t + 4] = c;
      indices[t + 5] = d;
    }
  };
  emit();
  indices.set(fans, 6 * quadCount);
  const mesh: MeshData = { positions, indices };

  // 5. Untangling: vertices of self-intersecting triangles fall back to safer places (their in-cell
  // fallback, then their loop's mass point) and their quads are split again; then checked again.
  if (untangle && quadCount > 0) {
    const level = new Uint8Array(positions.length / 3);
    for (let round = 0; ; round++) {
      throwIfAborted(signal);
      const pairs = findSelfIntersections(mesh);
      stats.selfIntersections = pairs.length / 2;
      if (pairs.length === 0 || round === UNTANGLE_ROUNDS) break;
      const moved = new Set<number>();
      for (const t of pairs) {
        for (let k = 0; k < 3; k++) {
          const v = indices[3 * t + k];
          if (moved.has(v)) continue;
          const next = level[v] === 0 && !Number.isNaN(saferPlaces[6 * v]) ? 1 : 2;
          if (level[v] >= next) continue;
          level[v] = next;
          const o = next === 1 ? 6 * v : 6 * v + 3;
          positions[3 * v] = saferPlaces[o];
          positions[3 * v + 1] = saferPlaces[o + 1];
          positions[3 * v + 2] = saferPlaces[o + 2];
          moved.add(v);
        }
      }
      if (moved.size === 0) break;
      stats.untangled += moved.size;
      const affected = new Set<number>();
      for (let q = 0; q < quadCount; q++) {
        for (let t = 0; t < 4; t++) if (moved.has(quads[4 * q + t])) affected.add(q);
      }
      await decide(affected);
      emit();
    }
  }
  progress('dual-contour', 1);
  return { mesh, extraEvaluations: herm.extraEvaluations + diagonalEvaluations, stats };

  /**
   * Builds the polygon of crossing `x` with segment vertices inserted on split faces into `out`.
   * Returns false (and leaves `quad` to be used) when no side of the quad lies on a split face.
   */
  function insertSegmentVertices(x: number, ccw: boolean, out: number[]): boolean {
    const key = herm.keys[x];
    const a = key % 3;
    const nk = Math.floor(key / 3);
    const ni = nk % (nx + 1), nj = Math.floor(nk / (nx + 1)) % (ny + 1), nkk = Math.floor(nk / ((nx + 1) * (ny + 1)));
    const u = (a + 1) % 3, w = (a + 2) % 3;
    const at = (du: number, dw: number, normal: number) => {
      const p = [ni, nj, nkk];
      p[u] += du;
      p[w] += dw;
      return 3 * nodeKey(p[0], p[1], p[2]) + normal;
    };
    // Faces between consecutive slots in the order 0, 1, 3, 2 (counter-clockwise around +a).
    const slotOrder = [0, 1, 3, 2];
    const faceAfter = [at(0, 0, u), at(-1, 0, w), at(0, -1, u), at(0, 0, w)];
    let any = false;
    const ring: number[] = [];
    for (let q = 0; q < 4; q++) {
      ring.push(edgeSlots[4 * x + slotOrder[q]]);
      const rec = splitFace.get(faceAfter[q]);
      if (rec) {
        const s = rec.edges[0] === key || rec.edges[1] === key ? 0 : 1;
        ring.push(-1 - rec.verts[s]); // marked as inserted
        any = true;
      }
    }
    if (!any) return false;
    if (!ccw) {
      // Reverse, keeping slot 0 first.
      const first = ring[0];
      ring.reverse();
      ring.pop();
      ring.unshift(first);
    }
    out.length = 0;
    out.push(...ring);
    return true;
  }

  /** Fans a polygon (inserted vertices marked as −1 − id) from its first inserted vertex. */
  function fanFromFirstInserted(ring: number[], out: number[]): void {
    const m = ring.length;
    let s = 0;
    while (ring[s] >= 0) s++;
    const ids = ring.map((r) => (r < 0 ? -1 - r : r));
    for (let t = 1; t < m - 1; t++) out.push(ids[s], ids[(s + t) % m], ids[(s + t + 1) % m]);
  }

  /**
   * Picks the diagonal of `q` (0: q0–q2, 1: q1–q3) by the rules in the file header. Returns −1 when
   * the field value must decide and `fieldValues` (signed values at the two diagonals' midpoints) is null.
   */
  function chooseDiagonal(x: number, q: number[], fieldValues: [number, number] | null): number {
    const nex = herm.normals[3 * x], ney = herm.normals[3 * x + 1], nez = herm.normals[3 * x + 2];
    const A0 = triMeasure(q[0], q[1], q[2], nex, ney, nez), A1 = triMeasure(q[0], q[2], q[3], nex, ney, nez);
    const B0 = triMeasure(q[0], q[1], q[3], nex, ney, nez), B1 = triMeasure(q[1], q[2], q[3], nex, ney, nez);
    const foldA = A0.fold + A1.fold, foldB = B0.fold + B1.fold;
    if (foldA !== foldB) return foldA < foldB ? 0 : 1;
    const SLIVER = 1e-3;
    const slA = Math.min(A0.quality, A1.quality) < SLIVER, slB = Math.min(B0.quality, B1.quality) < SLIVER;
    if (slA !== slB) return slA ? 1 : 0;
    if (quadBend(q) > diagonalTest * h) {
      if (!fieldValues) return -1;
      const fa = Math.abs(fieldValues[0]), fb = Math.abs(fieldValues[1]);
      if (fa !== fb && Number.isFinite(fa) && Number.isFinite(fb)) return fa < fb ? 0 : 1;
    }
    const flatA = dotUnit(A0, A1), flatB = dotUnit(B0, B1);
    return flatB > flatA ? 1 : 0;
  }

  /** Out-of-plane bend of a quad: the distance between its diagonals' midpoints along the normal (diagonal cross product). */
  function quadBend(q: number[]): number {
    const P = positions;
    const d0 = [0, 1, 2].map((t) => P[3 * q[2] + t] - P[3 * q[0] + t]);
    const d1 = [0, 1, 2].map((t) => P[3 * q[3] + t] - P[3 * q[1] + t]);
    const nx = d0[1] * d1[2] - d0[2] * d1[1], ny = d0[2] * d1[0] - d0[0] * d1[2], nz = d0[0] * d1[1] - d0[1] * d1[0];
    const len = Math.hypot(nx, ny, nz);
    if (!(len > 0)) return Infinity;
    let dot = 0;
    const n = [nx / len, ny / len, nz / len];
    for (let t = 0; t < 3; t++) dot += n[t] * 0.5 * (P[3 * q[0] + t] + P[3 * q[2] + t] - P[3 * q[1] + t] - P[3 * q[3] + t]);
    return Math.abs(dot);
  }



  /** True when a triangle normal (cx, cy, cz; length len) points away from vertex v's mean normal by more than about 100°. */
  function facesAway(v: number, cx: number, cy: number, cz: number, len: number): boolean {
    return cx * meanNormals.data[3 * v] + cy * meanNormals.data[3 * v + 1] + cz * meanNormals.data[3 * v + 2] < -VERTEX_FOLD * len;
  }

  /** Cross product, fold flag (normal more than 120° from n) and quality (2·area / longest edge²) of a triangle. */
  function triMeasure(a: number, b: number, c: number, nex: number, ney: number, nez: number) {
    const P = positions;
    const ux = P[3 * b] - P[3 * a], uy = P[3 * b + 1] - P[3 * a + 1], uz = P[3 * b + 2] - P[3 * a + 2];
    const vx = P[3 * c] - P[3 * a], vy = P[3 * c + 1] - P[3 * a + 1], vz = P[3 * c + 2] - P[3 * a + 2];
    const wx = P[3 * c] - P[3 * b], wy = P[3 * c + 1] - P[3 * b + 1], wz = P[3 * c + 2] - P[3 * b + 2];
    const cx = uy * vz - uz * vy, cy = uz * vx - ux * vz, cz = ux * vy - uy * vx;
    const len = Math.hypot(cx, cy, cz);
    const longest = Math.max(ux * ux + uy * uy + uz * uz, vx * vx + vy * vy + vz * vz, wx * wx + wy * wy + wz * wz);
    return {
      cx,
      cy,
      cz,
      len,
      fold: !(len > 0) || cx * nex + cy * ney + cz * nez < -0.5 * len || facesAway(a, cx, cy, cz, len) || facesAway(b, cx, cy, cz, len) || facesAway(c, cx, cy, cz, len) ? 1 : 0,
      quality: longest > 0 ? len / longest : 0,
    };
  }
}

/** A growable array of float64, filled 3 at a time. */
class Floats {
  data: Float64Array;
  length = 0;
  constructor(capacity: number) {
    this.data = new Float64Array(Math.max(16, capacity));
  }
  push3(a: number, b: number, c: number): void {
    if (this.length + 3 > this.data.length) {
      const next = new Float64Array(this.data.length * 2);
      next.set(this.data);
      this.data = next;
    }
    this.data[this.length++] = a;
    this.data[this.length++] = b;
    this.data[this.length++] = c;
  }
}

/** The 4 local edges of each face (face 2a + side: the edges off axis a whose a-coordinate is `side`). */
const FACE_EDGES: readonly (readonly number[])[] = Array.from({ length: 6 }, (_, f) => {
  const a = f >> 1;
  const side = f & 1;
  const out: number[] = [];
  for (let e = 0; e < 12; e++) {
    const b = e >> 2;
    if (b === a) continue;
    const coord = a === (b + 1) % 3 ? e & 1 : (e >> 1) & 1;
    if (coord === side) out.push(e);
  }
  return out;
});

function dotUnit(p: { cx: number; cy: number; cz: number; len: number }, q: { cx: number; cy: number; cz: number; len: number }): number {
  if (!(p.len > 0 && q.len > 0)) return -2;
  return (p.cx * q.cx + p.cy * q.cy + p.cz * q.cz) / (p.len * q.len);
}

/**
 * The vertex of one loop, in cell units relative to the cell's corner (see the file header): the QEF
 * minimizer when it lies in the cell, else the best of a few candidates inside the cell.
 */
function placeVertex(
  points: number[],
  normals: number[],
  cornerValues: Float64Array,
  singularCutoff: number,
  creaseReach: number,
  stats: DualContourStats,
  neighbourPlanes: () => { points: number[]; normals: number[] },
  claimCorner: (corner: [number, number, number]) => void,
): { position: Vertex3; inCell: Vertex3 | null } {
  const inCell = (q: number[]) => q[0] >= 0 && q[0] <= 1 && q[1] >= 0 && q[1] <= 1 && q[2] >= 0 && q[2] <= 1;
  const sol = solveQef(points, normals, { singularCutoff });
  if (sol.rank === 2 && sol.eigenvalues[1] >= CORNER_SEARCH_RATIO * sol.eigenvalues[0]) {
    // A crease: the corner that ends it may lie in this cell without a crossing of its third face here.
    const extra = neighbourPlanes();
    if (extra.points.length > 0) {
      const all = solveQef(points.concat(extra.points), normals.concat(extra.normals), { singularCutoff });
      const planes = (points.length + extra.points.length) / 3;
      if (all.rank === 3 && all.error <= planes * CORNER_RMS * CORNER_RMS) {
        if (inCell(all.point)) {
          stats.cornersFromNeighbours++;
          return { position: clampInto(all.point), inCell: null };
        }
        claimCorner(all.point);
      }
    }
  }
  if (inCell(sol.point)) return { position: clampInto(sol.point), inCell: null };
  stats.constrained++;
  return constrainedVertex(points, normals, cornerValues, sol, creaseReach);
}

type Vertex3 = [number, number, number];

/**
 * The neighbours' planes are searched for a corner only on a clear crease: λ₂ ≥ 0.1 λ₁ (the planes'
 * second singular value at least 0.32 of the first, about 18° between two equal sets of planes). The
 * tangent planes of a curved surface stay below: on the shared torus_sdf.onnx at depth 6, 36% of the
 * loops are rank 2 from curvature alone, with λ₂/λ₁ at median 0.017 and 99th percentile 0.085.
 */
const CORNER_SEARCH_RATIO = 0.1;

/** Largest RMS plane distance (cell widths) for a corner found with the neighbours' planes to count as one. */
const CORNER_RMS = 0.02;

/** Twice this is the smallest |nᵢ × nⱼ| for two planes to define a crease line (about 6°, as the QEF cutoff). */
const CREASE_SINE = 0.1;
/** Normals with a larger dot product count as one plane (about 6°) when averaging crossings. */
const SAME_PLANE = Math.cos((6 * Math.PI) / 180);
/**
 * Only creases sharper than this (|nᵢ × nⱼ| ≥ sin 30°, or for the QEF's own line σ₂/σ₁ ≥ 0.5) may put a
 * vertex outside its cell (`creaseReach`); the tangent planes of a merely curved surface may not.
 */
const SHARP_SINE = 0.5;
/** QEF error charged per squared cell width a candidate lies outside its cell. */
const OUTSIDE_PENALTY = 0.01;
/** Candidates within this many cell widths of the planes' surface count as on it. */
const ON_SURFACE = 0.01;

/**
 * A vertex inside the cell for a loop whose QEF minimizer lies outside it (a corner or crease that
 * passes just outside the cell). Candidates, all inside the cell: the minimizer clamped; each plane's
 * projection of the mass point; each crossing, and the mean of the crossings that share its plane (on
 * the surface whenever the face is convex); and on every crease line (two planes' intersection, and the QEF's own
 * line of its two strongest directions) the point of least QEF error within the cell. They are scored
 * by their distance to the polyhedral surface the planes describe (the boundary of the intersection of
 * their inside half-spaces for a convex feature, of the union for a concave one, whichever agrees with
 * more of the cell's corner signs). Among candidates on that surface (within ON_SURFACE) the least QEF
 * error wins; if none is on it, the nearest to it.
 */
function constrainedVertex(
  points: number[],
  normals: number[],
  cornerValues: Float64Array,
  sol: QefSolution,
  creaseReach: number,
): { position: Vertex3; inCell: Vertex3 } {
  const m = points.length / 3;
  const planeValue = (i: number, x: number[]) =>
    normals[3 * i] * (x[0] - points[3 * i]) + normals[3 * i + 1] * (x[1] - points[3 * i + 1]) + normals[3 * i + 2] * (x[2] - points[3 * i + 2]);
  let agreeMax = 0, agreeMin = 0;
  for (let c = 0; c < 8; c++) {
    const x = [c & 1, (c >> 1) & 1, (c >> 2) & 1];
    let hi = -Infinity, lo = Infinity;
    for (let i = 0; i < m; i++) {
      const f = planeValue(i, x);
      hi = Math.max(hi, f);
      lo = Math.min(lo, f);
    }
    const inside = cornerValues[c] < 0;
    if (hi < 0 === inside) agreeMax++;
    if (lo < 0 === inside) agreeMin++;
  }
  const convex = agreeMax >= agreeMin;
  const surfaceDistance = (x: number[]) => {
    let v = convex ? -Infinity : Infinity;
    for (let i = 0; i < m; i++) v = convex ? Math.max(v, planeValue(i, x)) : Math.min(v, planeValue(i, x));
    return Math.abs(v);
  };
  const qefError = (x: number[]) => {
    let e = 0;
    for (let i = 0; i < m; i++) e += planeValue(i, x) ** 2;
    return e;
  };
  // Two winners: over all candidates, and over those inside the cell (the fallback when a reach is vetoed).
  const best = { all: null as Vertex3 | null, allOn: false, allScore: Infinity, cell: null as Vertex3 | null, cellOn: false, cellScore: Infinity };
  const consider = (x: Vertex3 | null) => {
    if (!x) return;
    const d = surfaceDistance(x);
    const on = d <= ON_SURFACE;
    let outside = 0;
    for (let t = 0; t < 3; t++) outside += Math.max(0, -x[t], x[t] - 1) ** 2;
    const score = on ? qefError(x) + OUTSIDE_PENALTY * outside : d;
    if (!best.all || (on && !best.allOn) || (on === best.allOn && score < best.allScore)) {
      best.all = x;
      best.allOn = on;
      best.allScore = score;
    }
    if (outside === 0 && (!best.cell || (on && !best.cellOn) || (on === best.cellOn && score < best.cellScore))) {
      best.cell = x;
      best.cellOn = on;
      best.cellScore = score;
    }
  };
  consider(clampInto(sol.point));
  const c = sol.massPoint;
  for (let i = 0; i < m; i++) {
    const f = planeValue(i, c);
    consider(clampInto([c[0] - f * normals[3 * i], c[1] - f * normals[3 * i + 1], c[2] - f * normals[3 * i + 2]]));
    // The crossings themselves lie on the surface; so does the mean of the crossings that share a plane.
    consider(clampInto(points.slice(3 * i, 3 * i + 3)));
    const mean = [0, 0, 0];
    let count = 0;
    for (let j = 0; j < m; j++) {
      if (normals[3 * i] * normals[3 * j] + normals[3 * i + 1] * normals[3 * j + 1] + normals[3 * i + 2] * normals[3 * j + 2] < SAME_PLANE) continue;
      for (let d = 0; d < 3; d++) mean[d] += points[3 * j + d];
      count++;
    }
    if (count > 1) consider(clampInto(mean.map((x) => x / count)));
  }
  const lineBest = (base: number[], dir: number[], sharp: boolean) => {
    // QEF error along the line is quadratic in s; take its minimum, clipped to the cell.
    let num = 0, den = 0;
    for (let i = 0; i < m; i++) {
      const nd = normals[3 * i] * dir[0] + normals[3 * i + 1] * dir[1] + normals[3 * i + 2] * dir[2];
      num += nd * planeValue(i, base);
      den += nd * nd;
    }
    consider(clipLine(base, dir, den > 1e-12 ? -num / den : 0, 0));
    // The crease may pass just outside the cell: its point nearest the mass point, within reach.
    if (creaseReach > 0 && sharp) {
      const sMass = (c[0] - base[0]) * dir[0] + (c[1] - base[1]) * dir[1] + (c[2] - base[2]) * dir[2];
      consider(clipLine(base, dir, sMass, creaseReach));
    }
  };
  if (sol.rank >= 2) {
    const base = [0, 1, 2].map((d) => c[d] + sol.coefficients[0] * sol.axes[d] + sol.coefficients[1] * sol.axes[3 + d]);
    lineBest(base, [sol.axes[6], sol.axes[7], sol.axes[8]], sol.eigenvalues[1] >= SHARP_SINE * SHARP_SINE * sol.eigenvalues[0]);
  }
  for (let i = 0; i < m; i++) {
    for (let j = i + 1; j < m; j++) {
      const ni = [normals[3 * i], normals[3 * i + 1], normals[3 * i + 2]];
      const nj = [normals[3 * j], normals[3 * j + 1], normals[3 * j + 2]];
      const dir = [ni[1] * nj[2] - ni[2] * nj[1], ni[2] * nj[0] - ni[0] * nj[2], ni[0] * nj[1] - ni[1] * nj[0]];
      const len = Math.hypot(dir[0], dir[1], dir[2]);
      if (len < CREASE_SINE) continue;
      const pair = solveQef([...points.slice(3 * i, 3 * i + 3), ...points.slice(3 * j, 3 * j + 3)], [...ni, ...nj]);
      lineBest(pair.point, [dir[0] / len, dir[1] / len, dir[2] / len], len >= SHARP_SINE);
    }
  }
  return { position: best.all!, inCell: best.cell! };
}

/**
 * The point base + s · dir with s nearest `prefer` inside the cell grown by `grow` cell widths (kept
 * VERTEX_MARGIN inside it), or null when the line misses it.
 */
function clipLine(base: number[], dir: number[], prefer: number, grow: number): [number, number, number] | null {
  const lo = VERTEX_MARGIN - grow, hi = 1 + grow - VERTEX_MARGIN;
  let s0 = -Infinity, s1 = Infinity;
  for (let d = 0; d < 3; d++) {
    if (Math.abs(dir[d]) < 1e-12) {
      if (base[d] < lo || base[d] > hi) return null;
      continue;
    }
    const ta = (lo - base[d]) / dir[d], tb = (hi - base[d]) / dir[d];
    s0 = Math.max(s0, Math.min(ta, tb));
    s1 = Math.min(s1, Math.max(ta, tb));
  }
  if (!(s0 <= s1)) return null;
  const s = Math.min(s1, Math.max(s0, prefer));
  return clampInto([0, 1, 2].map((d) => base[d] + s * dir[d]), grow);
}

/** Clamps a point into the cell grown by `grow` cell widths (default 0), kept VERTEX_MARGIN inside. */
function clampInto(p: number[], grow = 0): [number, number, number] {
  const lo = VERTEX_MARGIN - grow, hi = 1 + grow - VERTEX_MARGIN;
  return [Math.min(hi, Math.max(lo, p[0])), Math.min(hi, Math.max(lo, p[1])), Math.min(hi, Math.max(lo, p[2]))];
}
