/**
 * Marching cubes straight over a dense grid of samples, at the grid's own resolution, touching only
 * the blocks that straddle the level.
 *
 * - Empty space is skipped with a min/max test per block of `blockSize`³ cells (the idea behind the
 *   min/max octrees of Wilhelms and Van Gelder 1992, "Octrees for faster isosurface generation"): a
 *   block whose samples all lie on one side of the level emits nothing and is never visited again. The
 *   test reads each x-row once and folds its min/max into the blocks that share it.
 * - Cells are visited a cell layer at a time (z), each layer's active blocks in order, each block's rows
 *   in order; vertex ids of the edges live in a flat ring of two node planes (x, y and z edges per node),
 *   checked against the vertex count at the start of the layer that could have made them, so nothing needs
 *   clearing or carrying. No hashing: each sign-changing edge gets one vertex, the first time a cell meets it.
 * - Cell loops come from the flat table of cell-plan.ts (filled on first use from cell-loops.ts, with the
 *   triangulation's allowed fans beside them), shared with the octree path.
 * - Each cell is triangulated exactly as the octree path does (cell-loops.ts: face walking with the
 *   asymptotic decider; MeshBuilder.addFan), with the same `EDGE_MARGIN` and the same rule that the
 *   grid's outer layer counts as outside, so on the same lattice both paths give the same mesh.
 *
 * Speed notes (2-core machine, Node 20, 256³ bench lattice, 1.53 M triangles; noisy, shared machine):
 * about 420 ns per triangle before, 100–250 ns after. What mattered: a layer stamp per edge beside the
 * id (a second cache miss per lookup), carrying the top plane by a loop over the whole plane, reading
 * (B + 1)³ samples per block in pass 1, `Float32Array.from` over the positions (9% alone), evaluating the
 * outside-the-bounds rule for every cell of a boundary block instead of for the cells that touch the
 * bounds, and one large loop nest that V8 only optimized by on-stack replacement.
 * Later (interleaved A/B runs in one process, 256³ bench grids): pass 1 by runs (29–35 → about 10 ms on the
 * sphere), float32 positions and views instead of copies (1.2×), the two-plane ring (1.02–1.12×), fans
 * read their corners once (1.09× on the sphere). Tried and dropped: skipping a row whose four node rows
 * lie on one side before the cell loop (0.86–0.92×: the test cost more than the cells it skipped).
 * Vertices are numbered at first touch in cell order (cell layer, block, row, cell).
 */
import type { FieldKind, MeshData } from '../types.js';
import { EDGE_AXIS, edgeCrossing } from './cell-loops.js';
import { cellPlanAt, cellPlanKey, EDGE_C0, EDGE_C1, EDGE_UPPER, PLAN } from './cell-plan.js';
import { MeshBuilder } from './mesh-builder.js';

/** Options for {@link marchingCubesGrid}. */
export interface MarchingCubesGridOptions {
  kind: FieldKind;
  level: number;
  /** World position of sample [0,0,0], metres. */
  origin: [number, number, number];
  /** Distance between samples along x, y, z, metres. */
  spacing: [number, number, number];
  /** Cells per block edge for empty-space skipping. Default: 8 (measured best of 4/8/16 on the 256³ bench grids). */
  blockSize?: number;
}

export interface GridExtraction {
  mesh: MeshData;
  /** Cells that emitted triangles. */
  surfaceCells: number;
  activeBlocks: number;
  totalBlocks: number;
}

/**
 * Extracts the level set of `values` (C order, shape [nz, ny, nx]: x fastest) as a closed mesh.
 * `dims` = [nx, ny, nz] samples per axis.
 */
export function marchingCubesGrid(values: Float32Array, dims: [number, number, number], options: MarchingCubesGridOptions): GridExtraction {
  const [nx, ny, nz] = dims;
  const B = checkGridInput('marchingCubesGrid', values, dims, options);
  const cx = nx - 1, cy = ny - 1, cz = nz - 1;
  const bx = Math.ceil(cx / B), by = Math.ceil(cy / B), bz = Math.ceil(cz / B);

  const active = new Uint8Array(bx * by * bz);
  const activeBlocks = markActiveBlocks(values, dims, B, options.level, options.kind === 'sdf', active, 0, bz);

  // Pass 2: march the active blocks layer by layer.
  const marcher = new GridMarcher(values, dims, options, B, expectedVertices(activeBlocks, B), takeRing(nx * ny * 2 * 3));
  for (let k = 0; k < cz; k++) marcher.cellLayer(active, k);
  if (marcher.ids.length <= RING_KEEP_LIMIT) keptRing = marcher.ids;
  return { mesh: marcher.out.toMesh(), surfaceCells: marcher.surfaceCells, activeBlocks, totalBlocks: bx * by * bz };
}

/**
 * The vertex-id ring of the last call, kept for the next one (calls are synchronous, so one at a time
 * uses it): a new ring is fresh memory, which costs its page faults on every call where first touches are
 * dear (about 7–18 µs per 4 kB page on the 2-core VM; 1.5 MB for a 256² plane, about a quarter of a
 * 256³ prop's call). Rings over RING_KEEP_LIMIT elements are not kept.
 */
let keptRing: Int32Array | null = null;
const RING_KEEP_LIMIT = 1 << 23; // 32 MB: a plane of about 1,180² nodes

/** A zeroed ring of `length` ids: the kept one when it is long enough, else a new one. */
function takeRing(length: number): Int32Array {
  const kept = keptRing;
  keptRing = null;
  if (kept && kept.length >= length) return kept.fill(0, 0, length).subarray(0, length);
  return new Int32Array(length);
}

/** What {@link marchingCubesGridLayers} returns: one z-range's mesh and the vertices on its two end planes. */
export interface GridLayersExtraction extends GridExtraction {
  /**
   * Vertices this range made on the x and y edges of its bottom plane k = layer0·B: pairs (edge key, vertex
   * id), edge key = 2·(i + nx·j) + axis (0: x edge, 1: y edge), in edge-key order. Empty when layer0 = 0.
   */
  bottomEdges: Int32Array;
  /** The same for its top plane k = min(layer1·B, nz − 1). Empty when the range ends at the grid's top. */
  topEdges: Int32Array;
}

/**
 * Buffers that {@link marchingCubesGridLayers} may reuse from one call to the next (one call at a time):
 * filled in and grown by it, kept by the caller. A worker thread that extracts many slabs keeps one, so
 * its allocator does not hand the memory back and fault it in again per slab (measured on the 2-core VM,
 * 8 slabs of the 256³ bench lattice in turn on one worker thread: 188–300 ms without, 171–181 ms with;
 * for the prop, a worker without reuse took 126–195 ms, 41–58 ms with glibc's MALLOC_ARENA_MAX=1).
 */
export interface GridLayersScratch {
  ids?: Int32Array;
  positions?: Float32Array;
  indices?: Uint32Array;
}

/**
 * Extracts block layers [layer0, layer1) of the grid on their own (block layer = `blockSize` cells in z),
 * for callers that split the grid into z-slabs (app/node/marching-cubes-grid-parallel.ts runs them on
 * worker threads). The cells are visited and their vertices numbered exactly as {@link marchingCubesGrid}
 * does, except that vertices on the bottom plane's edges are made here too (the whole grid would have
 * taken them from the layer below): concatenating the ranges in order, with each range's `bottomEdges`
 * replaced by the vertices of the previous range's `topEdges` on the same edge and the remaining ids
 * renumbered in order, gives the whole grid's mesh byte for byte. Inputs are those of marchingCubesGrid;
 * `scratch`, when given, lends buffers to reuse (see {@link GridLayersScratch}); the result does not depend on it.
 * `copy` (default: whether `scratch` was given) makes the returned mesh own its arrays; without it they are
 * views over the scratch buffers, valid until the scratch is lent again.
 *
 * @example
 * const lower = marchingCubesGridLayers(values, [65, 65, 65], options, 0, 4);
 * const upper = marchingCubesGridLayers(values, [65, 65, 65], options, 4, 8); // blockSize 8: 8 layers
 */
export function marchingCubesGridLayers(
  values: Float32Array,
  dims: [number, number, number],
  options: MarchingCubesGridOptions,
  layer0: number,
  layer1: number,
  scratch?: GridLayersScratch,
  copy = scratch !== undefined,
): GridLayersExtraction {
  const [nx, ny, nz] = dims;
  const B = checkGridInput('marchingCubesGridLayers', values, dims, options);
  const cx = nx - 1, cy = ny - 1, cz = nz - 1;
  const bx = Math.ceil(cx / B), by = Math.ceil(cy / B), bz = Math.ceil(cz / B);
  if (!Number.isInteger(layer0) || !Number.isInteger(layer1) || layer0 < 0 || layer1 > bz || layer0 >= layer1)
    throw new Error(`marchingCubesGridLayers: block layers [${layer0}, ${layer1}) are not a non-empty range of 0…${bz}`);
  const active = new Uint8Array(bx * by * bz);
  const activeBlocks = markActiveBlocks(values, dims, B, options.level, options.kind === 'sdf', active, layer0, layer1);
  const ringLength = nx * ny * 2 * 3;
  let marcher: GridMarcher;
  if (scratch) {
    // Reuse the caller's buffers: the ring cleared, the mesh buffers overwritten from the start.
    if (!scratch.ids || scratch.ids.length < ringLength) scratch.ids = new Int32Array(ringLength);
    else scratch.ids.fill(0, 0, ringLength);
    marcher = new GridMarcher(values, dims, options, B, scratch.positions ? 0 : expectedVertices(activeBlocks, B), scratch.ids.subarray(0, ringLength));
    if (scratch.positions) marcher.out.pos = scratch.positions;
    if (scratch.indices) marcher.out.idx = scratch.indices;
  } else marcher = new GridMarcher(values, dims, options, B, expectedVertices(activeBlocks, B));
  // The bottom plane's edges are read right after the first cell layer, before its ring slot is reused.
  let bottomEdges: Int32Array = new Int32Array(0);
  const kEnd = Math.min(layer1 * B, cz);
  for (let k = layer0 * B; k < kEnd; k++) {
    marcher.cellLayer(active, k);
    if (k === layer0 * B && layer0 > 0) bottomEdges = marcher.planeEdges(k);
  }
  const topEdges = layer1 < bz ? marcher.planeEdges(kEnd) : new Int32Array(0);
  if (scratch) {
    scratch.positions = marcher.out.pos;
    scratch.indices = marcher.out.idx;
  }
  return { mesh: marcher.out.toMesh(copy), surfaceCells: marcher.surfaceCells, activeBlocks, totalBlocks: bx * by * bz, bottomEdges, topEdges };
}

/**
 * The marching state of pass 2. The hot loops live in small methods (a row, a cell) rather than in one
 * large loop nest: V8 optimizes a method after a few thousand calls, while a loop nest waits for
 * on-stack replacement and falls back to the interpreter on every deoptimization. Measured on the 128³
 * lattice (2 cores, Node 20): the first of eight calls took 480–510 ms with the single loop nest.
 */
class GridMarcher {
  readonly nx: number;
  readonly nxy: number;
  readonly cx: number;
  readonly cy: number;
  readonly cz: number;
  readonly bx: number;
  readonly by: number;
  readonly B: number;
  readonly level: number;
  readonly sdf: boolean;
  readonly ox: number;
  readonly oy: number;
  readonly oz: number;
  readonly sx: number;
  readonly sy: number;
  readonly sz: number;
  /**
   * Vertex id + 1 (0: none yet) of the x, y and z edges of node (i, j, k) at 6·(i + nx·j) + 3·(k mod 2) +
   * axis: a ring of two node planes, interleaved so a cell finds the lower and upper edges of one node
   * column in one cache line (1.01–1.02× on the 256³ bench grids, interleaved A/B, same bytes). While cell
   * layer k is marched, an id on plane k is current when it is at least `firstPrev` (the vertex count at
   * the start of layer k − 1, which made that plane's x and y edges as its top), one on plane k + 1 when it
   * is at least `firstCur` (the start of layer k); older ids there belong to plane k − 1 or below, so
   * nothing needs clearing or carrying.
   */
  readonly ids: Int32Array;
  readonly out: MeshBuilder;
  /** Corner values of the current cell, negative inside. */
  readonly v = new Float64Array(8);
  readonly loopIds = new Int32Array(16);
  /** Slot offset of each cell edge's lower node (x, y part) plus its axis. */
  readonly edgeSlot: Int32Array;
  /**
   * Inside bits of the nodes of whole blocks (B = 8 only), for two node planes (slot k mod 2): per node row
   * j and block column bi, bit c for node (bi·B + c, j), c = 0…B, at bits[slot·ny·bx + j·bx + bi]. A block's
   * rows of plane k are filled once, when a cell layer first needs them (`bitsPlane` holds the plane they
   * were filled for, per slot and block); a cell row then finds its surface cells from four words.
   */
  readonly bits: Uint16Array;
  readonly bitsPlane: Int32Array;
  surfaceCells = 0;
  firstPrev = 0;
  firstCur = 0;

  constructor(readonly values: Float32Array, dims: [number, number, number], options: MarchingCubesGridOptions, B: number, expectedVertices: number, ids?: Int32Array) {
    const [nx, ny, nz] = dims;
    this.nx = nx;
    this.nxy = nx * ny;
    this.cx = nx - 1;
    this.cy = ny - 1;
    this.cz = nz - 1;
    this.bx = Math.ceil(this.cx / B);
    this.by = Math.ceil(this.cy / B);
    this.B = B;
    this.level = options.level;
    this.sdf = options.kind === 'sdf';
    [this.ox, this.oy, this.oz] = options.origin;
    [this.sx, this.sy, this.sz] = options.spacing;
    this.ids = ids ?? new Int32Array(this.nxy * 2 * 3);
    this.out = new MeshBuilder(expectedVertices);
    this.edgeSlot = Int32Array.from({ length: 12 }, (_, e) => 6 * ((EDGE_C0[e] & 1) + nx * ((EDGE_C0[e] >> 1) & 1)) + EDGE_AXIS[e]);
    this.bits = new Uint16Array(B === 8 ? 2 * ny * this.bx : 0);
    this.bitsPlane = new Int32Array(B === 8 ? 2 * this.bx * this.by : 0).fill(-1);
  }

  /**
   * Marches cell layer k (the cells between node planes k and k + 1) of every active block; layers must
   * come in increasing order. Visiting the grid a cell layer at a time, rather than a block at a time,
   * needs a ring of only two node planes: measured on the 2-core VM, the nine-plane ring of block-at-a-time
   * order (7 MB for a 256² plane) was fresh memory on every call, at about 7 µs per 4 kB page.
   */
  cellLayer(active: Uint8Array, k: number): void {
    const { B, bx, by, cx, cy, cz } = this;
    this.firstPrev = this.firstCur;
    this.firstCur = this.out.vertexCount;
    const thr0 = this.firstPrev;
    const bk = Math.floor(k / B);
    const p0 = 3 * (k & 1), p1 = 3 * ((k + 1) & 1);
    const kOuterLayer = k === 0 || k === cz - 1;
    for (let bj = 0, o = bx * by * bk; bj < by; bj++) {
      for (let bi = 0; bi < bx; bi++, o++) {
        if (!active[o]) continue;
        const j1 = Math.min(bj * B + B, cy), i1 = Math.min(bi * B + B, cx);
        const i0b = bi * B;
        const touches = i0b === 0 || bj === 0 || bk === 0 || i1 === cx || j1 === cy || Math.min(bk * B + B, cz) === cz;
        if (touches) {
          for (let j = bj * B; j < j1; j++) this.rowNearBounds(i0b, i1, j, k, p0, p1, thr0, kOuterLayer || j === 0 || j === cy - 1);
        } else if (B === 8) {
          this.fillBits(k, bi, bj);
          this.fillBits(k + 1, bi, bj);
          for (let j = bj * B; j < j1; j++) this.rowFromBits(bi, j, k, p0, p1, thr0);
        } else {
          for (let j = bj * B; j < j1; j++) this.row(i0b, i1, j, k, p0, p1, thr0);
        }
      }
    }
  }

  /**
   * The vertices the cell layer just marched made on the x and y edges of its plane k (its bottom or top):
   * pairs (2·node + axis, id), see {@link GridLayersExtraction}. Ids from `firstCur` on are that layer's own.
   */
  planeEdges(k: number): Int32Array {
    const { ids, nxy, firstCur } = this;
    const p = 3 * (k & 1);
    let count = 0;
    for (let n = 0; n < nxy; n++) {
      if (ids[p + 6 * n] > firstCur) count++;
      if (ids[p + 6 * n + 1] > firstCur) count++;
    }
    const out = new Int32Array(2 * count);
    let o = 0;
    for (let n = 0; n < nxy; n++)
      for (let a = 0; a < 2; a++) {
        const id = ids[p + 6 * n + a] - 1;
        if (id >= firstCur) {
          out[o++] = 2 * n + a;
          out[o++] = id;
        }
      }
    return out;
  }

  /** Cells i0b ≤ i < i1 of row (j, k), none with a corner on the grid's outer layer. */
  row(i0b: number, i1: number, j: number, k: number, p0: number, p1: number, thr0: number): void {
    const { values, nx, nxy, level, sdf, v } = this;
    // Scan along x keeping the cell's left face (values and inside bits); read only the right face.
    const r00 = nx * j + nxy * k, r10 = r00 + nx, r01 = r00 + nxy, r11 = r01 + nx;
    let a0 = values[r00 + i0b], a2 = values[r10 + i0b], a4 = values[r01 + i0b], a6 = values[r11 + i0b];
    let lm = insideBits(a0, a2, a4, a6, sdf, level);
    for (let i = i0b; i < i1; i++) {
      const a1 = values[r00 + i + 1], a3 = values[r10 + i + 1], a5 = values[r01 + i + 1], a7 = values[r11 + i + 1];
      const rm = insideBits(a1, a3, a5, a7, sdf, level);
      const mask = SPREAD_LEFT[lm] | SPREAD_RIGHT[rm];
      lm = rm;
      if (mask !== 0 && mask !== 255) {
        if (sdf) {
          v[0] = a0 - level; v[1] = a1 - level; v[2] = a2 - level; v[3] = a3 - level;
          v[4] = a4 - level; v[5] = a5 - level; v[6] = a6 - level; v[7] = a7 - level;
        } else {
          v[0] = level - a0; v[1] = level - a1; v[2] = level - a2; v[3] = level - a3;
          v[4] = level - a4; v[5] = level - a5; v[6] = level - a6; v[7] = level - a7;
        }
        this.cell(mask, i, j, k, p0, p1, thr0);
      }
      a0 = a1; a2 = a3; a4 = a5; a6 = a7;
    }
  }

  /** Fills the inside bits of plane `plane`'s node rows bj·8 … bj·8 + 8 in block column bi, once per plane. */
  fillBits(plane: number, bi: number, bj: number): void {
    const { bits, bitsPlane, values, nx, nxy, bx, level } = this;
    const slot = plane & 1;
    const stamp = slot * bx * this.by + bi + bx * bj;
    if (bitsPlane[stamp] === plane) return;
    bitsPlane[stamp] = plane;
    const base = slot * (nxy / nx) * bx + bi;
    const i0 = bi * 8;
    for (let j = bj * 8, jEnd = j + 8; j <= jEnd; j++) {
      const r = nx * j + nxy * plane + i0;
      let w = 0;
      if (this.sdf) {
        for (let c = 8; c >= 0; c--) w = (w << 1) | (values[r + c] < level ? 1 : 0);
      } else {
        for (let c = 8; c >= 0; c--) w = (w << 1) | (values[r + c] > level ? 1 : 0);
      }
      bits[base + j * bx] = w;
    }
  }

  /**
   * Like {@link row} for cell row (j, k) of a whole block (B = 8) away from the outer layer, from the inside
   * bits of its four node rows: a cell has a sign change where those differ across the rows or along x, so
   * only the surface cells read their corner values. Same cells, same order, same mesh as {@link row}.
   */
  rowFromBits(bi: number, j: number, k: number, p0: number, p1: number, thr0: number): void {
    const { bits, bx, values, nx, nxy, level, sdf, v } = this;
    const rows = nxy / nx;
    const s0 = (k & 1) * rows * bx + bi + j * bx, s1 = ((k + 1) & 1) * rows * bx + bi + j * bx;
    const r00 = bits[s0], r10 = bits[s0 + bx], r01 = bits[s1], r11 = bits[s1 + bx];
    const d = (r00 ^ r10) | (r00 ^ r01) | (r00 ^ r11);
    let cells = (d | (d >> 1) | (r00 ^ (r00 >> 1))) & 0xff;
    const i0 = bi * 8;
    const base = nx * j + nxy * k;
    while (cells !== 0) {
      const c = 31 - Math.clz32(cells & -cells);
      cells &= cells - 1;
      const mask = ((r00 >> c) & 3) | (((r10 >> c) & 3) << 2) | (((r01 >> c) & 3) << 4) | (((r11 >> c) & 3) << 6);
      const i = i0 + c;
      const b00 = base + i, b10 = b00 + nx, b01 = b00 + nxy, b11 = b01 + nx;
      if (sdf) {
        v[0] = values[b00] - level; v[1] = values[b00 + 1] - level; v[2] = values[b10] - level; v[3] = values[b10 + 1] - level;
        v[4] = values[b01] - level; v[5] = values[b01 + 1] - level; v[6] = values[b11] - level; v[7] = values[b11 + 1] - level;
      } else {
        v[0] = level - values[b00]; v[1] = level - values[b00 + 1]; v[2] = level - values[b10]; v[3] = level - values[b10 + 1];
        v[4] = level - values[b01]; v[5] = level - values[b01 + 1]; v[6] = level - values[b11]; v[7] = level - values[b11 + 1];
      }
      this.cell(mask, i, j, k, p0, p1, thr0);
    }
  }

  /** Like {@link row} in a block on the grid's outer layer: cells with an outer corner force it outside. */
  rowNearBounds(i0b: number, i1: number, j: number, k: number, p0: number, p1: number, thr0: number, outerRow: boolean): void {
    const { values, nx, nxy, cx, cy, cz, level, sdf, v } = this;
    for (let i = i0b; i < i1; i++) {
      if (!outerRow && i !== 0 && i !== cx - 1) {
        this.row(i, i + 1, j, k, p0, p1, thr0);
        continue;
      }
      const base = i + nx * j + nxy * k;
      let mask = 0;
      for (let q = 0; q < 8; q++) {
        const di = q & 1, dj = (q >> 1) & 1, dk = (q >> 2) & 1;
        const x = values[base + di + nx * dj + nxy * dk];
        let s = sdf ? x - level : level - x;
        const ii = i + di, jj = j + dj, kk = k + dk;
        if (s < 0 && (ii === 0 || jj === 0 || kk === 0 || ii === cx || jj === cy || kk === cz)) s = 0;
        v[q] = s;
        if (s < 0) mask |= 1 << q;
      }
      if (mask !== 0 && mask !== 255) this.cell(mask, i, j, k, p0, p1, thr0);
    }
  }

  /** Emits the polygons of surface cell (i, j, k) with corner values `v` and inside-corner `mask`. */
  cell(mask: number, i: number, j: number, k: number, p0: number, p1: number, thr0: number): void {
    const { v, ids, out, loopIds, edgeSlot, firstCur } = this;
    this.surfaceCells++;
    let at = cellPlanAt(cellPlanKey(mask, v));
    const nodeSlot = 6 * (i + this.nx * j);
    for (let loops = PLAN[at++]; loops > 0; loops--) {
      const n = PLAN[at++];
      const starts = PLAN[at++];
      for (let m = 0; m < n; m++) {
        const e = PLAN[at++];
        const upper = EDGE_UPPER[e];
        const slot = (upper ? p1 : p0) + nodeSlot + edgeSlot[e];
        let id = ids[slot] - 1;
        if (id < (upper ? firstCur : thr0)) {
          const c0 = EDGE_C0[e];
          const a = EDGE_AXIS[e];
          const t = edgeCrossing(v[c0], v[EDGE_C1[e]]);
          const i0 = i + (c0 & 1), j0 = j + ((c0 >> 1) & 1), k0 = k + upper;
          id = out.addVertex(this.ox + this.sx * (i0 + (a === 0 ? t : 0)), this.oy + this.sy * (j0 + (a === 1 ? t : 0)), this.oz + this.sz * (k0 + (a === 2 ? t : 0)));
          ids[slot] = id + 1;
        }
        loopIds[m] = id;
      }
      if (n === 3) out.addTriangle(loopIds[0], loopIds[1], loopIds[2]);
      else out.addFan(starts, loopIds, n);
    }
  }
}

/**
 * Vertices to make room for: about one per surface cell, and about B² surface cells per active block
 * (a sheet through a block of B³ cells). Measured on the 256³ bench grids: 196 k / 765 k / 18 k vertices
 * for 3,062 / 11,680 / 306 active blocks (B = 8), 1.00 / 1.02 / 0.94 × B² per block; the buffers grow by
 * doubling past it. A quarter more keeps most grids from growing: twice as much, as before, cost 54 ms a
 * call on the 256³ lattice wherever freed memory is reused (calloc zeroes the whole of it).
 */
function expectedVertices(activeBlocks: number, B: number): number {
  return Math.ceil(1.25 * activeBlocks * B * B);
}

/** Checks the arguments both entry points share (misuse throws, naming the function); returns the block size. */
function checkGridInput(name: string, values: Float32Array, dims: [number, number, number], options: MarchingCubesGridOptions): number {
  const [nx, ny, nz] = dims;
  if (nx < 2 || ny < 2 || nz < 2) throw new Error(`${name}: every axis needs at least 2 samples`);
  if (values.length !== nx * ny * nz) throw new Error(`${name}: ${values.length} values for ${nx}×${ny}×${nz} samples`);
  const B = options.blockSize ?? 8;
  if (!Number.isInteger(B) || B < 1) throw new Error(`${name}: blockSize must be a whole number ≥ 1, got ${B}`);
  return B;
}

/**
 * Pass 1: sets `active[block]` for the blocks of block layers [bk0, bk1) that straddle the level (after
 * forcing the grid's outer layer outside) and returns how many. Each x-row is read once, in order, as runs
 * of samples on one side of the level (inside ⇔ v < level for an SDF, v > level otherwise; a NaN counts as
 * outside, as pass 2 treats it); each run ORs its side (1 inside, 2 outside) into the blocks it overlaps. A
 * row on one side throughout, most rows of most grids, costs one compare per sample and one OR for its block
 * row. Measured on the 2-core VM, 256³ bench sphere: 29–35 ms per grid with a min/max per block segment
 * (the previous pass 1), about 10 ms with runs found by {@link runEnd}.
 */
function markActiveBlocks(values: Float32Array, dims: [number, number, number], B: number, level: number, sdf: boolean, active: Uint8Array, bk0: number, bk1: number): number {
  const [nx, ny, nz] = dims;
  const cx = nx - 1, cy = ny - 1, cz = nz - 1;
  const bx = Math.ceil(cx / B), by = Math.ceil(cy / B), bz = Math.ceil(cz / B);
  const nb = bx * by;
  // Side bits of the current block layer so far, of the plane being read, and of the plane's block rows
  // (from rows on one side throughout).
  const layerBits = new Uint8Array(nb), planeBits = new Uint8Array(nb), rowBits = new Uint8Array(by);
  // Block range [first, last] of each node index along x: a node on a block boundary belongs to two.
  const firstBlock = Int32Array.from({ length: nx }, (_, i) => (i > 0 && i % B === 0 ? i / B - 1 : Math.min(Math.floor(i / B), bx - 1)));
  const lastBlock = Int32Array.from({ length: nx }, (_, i) => Math.min(Math.floor(i / B), bx - 1));
  let count = 0;
  const k0 = bk0 * B;
  for (let k = k0, kEnd = Math.min(bk1 * B, cz); k <= kEnd; k++) {
    planeBits.fill(0);
    rowBits.fill(0);
    for (let j = 0; j <= cy; j++) {
      const bjA = Math.min(Math.floor(j / B), by - 1);
      const bjB = j % B === 0 && j > 0 && j < cy ? bjA - 1 : -1;
      const row = k * nx * ny + j * nx;
      const rowEnd = row + nx;
      let side = (sdf ? values[row] < level : values[row] > level) ? 1 : 2;
      let i = runEnd(values, row + 1, rowEnd, level, sdf, side);
      if (i === rowEnd) {
        rowBits[bjA] |= side;
        if (bjB >= 0) rowBits[bjB] |= side;
        continue;
      }
      // The row changes side: fold each run [start, i − 1] into its blocks.
      let start = row;
      for (;;) {
        const o = bx * bjA, p = bx * bjB;
        for (let b = firstBlock[start - row], e = lastBlock[i - 1 - row]; b <= e; b++) {
          planeBits[o + b] |= side;
          if (bjB >= 0) planeBits[p + b] |= side;
        }
        if (i === rowEnd) break;
        start = i;
        side = 3 - side;
        i = runEnd(values, i + 1, rowEnd, level, sdf, side);
      }
    }
    // The plane's bits per block, its one-sided rows included, folded into the layer.
    for (let bj = 0, o = 0; bj < by; bj++) {
      const r = rowBits[bj];
      for (let bi = 0; bi < bx; bi++, o++) layerBits[o] |= planeBits[o] |= r;
    }
    // Plane k closes block layer bk when it is that layer's top; it then also opens the next layer.
    if (k > k0 && (k % B === 0 || k === cz)) {
      const bk = Math.ceil(k / B) - 1;
      for (let bj = 0; bj < by; bj++)
        for (let bi = 0; bi < bx; bi++) {
          const o = bi + bx * bj;
          const touches = bi === 0 || bj === 0 || bk === 0 || bi === bx - 1 || bj === by - 1 || bk === bz - 1;
          const bits = layerBits[o];
          if ((bits & 1) !== 0 && ((bits & 2) !== 0 || touches)) {
            active[o + nb * bk] = 1;
            count++;
          }
        }
      // The next layer starts with this plane.
      layerBits.set(planeBits);
    }
  }
  return count;
}

/**
 * The first index in [i, end) whose sample is not on `side` (1 inside, 2 outside; inside ⇔ v < level for an
 * SDF, v > level otherwise), or `end`. Eight samples are compared per branch, with `&`/`|` on the booleans
 * so the loop has one exit test per eight: measured on the 2-core VM over the 256³ bench sphere's rows,
 * 0.44 ns per sample against 1.33 for one exit test per sample and 0.75 for a branch-free count. One plain
 * loop per kind and side (the four functions below) keeps the compare out of a callback.
 */
function runEnd(values: Float32Array, i: number, end: number, level: number, sdf: boolean, side: number): number {
  if (sdf) return side === 1 ? endBelow(values, i, end, level) : endNotBelow(values, i, end, level);
  return side === 1 ? endAbove(values, i, end, level) : endNotAbove(values, i, end, level);
}

function endBelow(values: Float32Array, i: number, end: number, level: number): number {
  for (; i + 7 < end; i += 8)
    if (((+(values[i] < level) & +(values[i + 1] < level) & +(values[i + 2] < level) & +(values[i + 3] < level) &
      +(values[i + 4] < level) & +(values[i + 5] < level) & +(values[i + 6] < level) & +(values[i + 7] < level))) === 0) break;
  while (i < end && values[i] < level) i++;
  return i;
}

function endNotBelow(values: Float32Array, i: number, end: number, level: number): number {
  for (; i + 7 < end; i += 8)
    if ((+(values[i] < level) | +(values[i + 1] < level) | +(values[i + 2] < level) | +(values[i + 3] < level) |
      +(values[i + 4] < level) | +(values[i + 5] < level) | +(values[i + 6] < level) | +(values[i + 7] < level)) !== 0) break;
  while (i < end && !(values[i] < level)) i++;
  return i;
}

function endAbove(values: Float32Array, i: number, end: number, level: number): number {
  for (; i + 7 < end; i += 8)
    if (((+(values[i] > level) & +(values[i + 1] > level) & +(values[i + 2] > level) & +(values[i + 3] > level) &
      +(values[i + 4] > level) & +(values[i + 5] > level) & +(values[i + 6] > level) & +(values[i + 7] > level))) === 0) break;
  while (i < end && values[i] > level) i++;
  return i;
}

function endNotAbove(values: Float32Array, i: number, end: number, level: number): number {
  for (; i + 7 < end; i += 8)
    if ((+(values[i] > level) | +(values[i + 1] > level) | +(values[i + 2] > level) | +(values[i + 3] > level) |
      +(values[i + 4] > level) | +(values[i + 5] > level) | +(values[i + 6] > level) | +(values[i + 7] > level)) !== 0) break;
  while (i < end && !(values[i] > level)) i++;
  return i;
}

/** Inside bits of a cell face's 4 samples: bit y + 2z (raw values, before the outer-layer rule). */
function insideBits(a: number, b: number, c: number, d: number, sdf: boolean, level: number): number {
  return sdf
    ? (a < level ? 1 : 0) | (b < level ? 2 : 0) | (c < level ? 4 : 0) | (d < level ? 8 : 0)
    : (a > level ? 1 : 0) | (b > level ? 2 : 0) | (c > level ? 4 : 0) | (d > level ? 8 : 0);
}

/** Face bits (y + 2z) to cell corner bits: left face x = 0 → corners 0, 2, 4, 6; right face → 1, 3, 5, 7. */
const SPREAD_LEFT = Array.from({ length: 16 }, (_, m) => (m & 1) | ((m & 2) << 1) | ((m & 4) << 2) | ((m & 8) << 3));
const SPREAD_RIGHT = SPREAD_LEFT.map((x) => x << 1);
