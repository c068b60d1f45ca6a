/**
 * Adaptive octree sampling: finds every finest-level cell whose corners straddle the level,
 * without allocating or evaluating the dense (2^d+1)^3 lattice.
 *
 * - SDF fields: a cell is pruned when |s(center)| > L · (half its diagonal): no zero can lie inside it
 *   for an L-Lipschitz field (the sphere-tracing bound; Hart 1996, "Sphere tracing"). Surviving cells
 *   are split down to depth d − 1; then the corners of their children are evaluated and the cells with
 *   a sign change kept. Coarse cell centres are lattice nodes, so they are reused as corners.
 * - Density and occupancy fields (no distance bound): coarse to fine from `startDepth`. Every cell of
 *   the start level is evaluated at its corners; cells with a sign change and their face neighbours
 *   are split, level by level. What this can miss: a closed piece of surface that lies entirely inside
 *   one start-level cell and its face neighbours without changing the sign of any corner there
 *   (a floater or a thin spike smaller than a start-level cell, away from other surface).
 * - Both: at the finest level a flood fill follows every face whose corners change sign into the
 *   neighbour across it, so a connected sheet of surface is followed to its end even where the
 *   coarse test missed it (e.g. a neural SDF steeper than its Lipschitz bound).
 *
 * Outside the bounds counts as outside: lattice nodes on the lattice's outer layer are forced to a
 * non-negative value, so a surface that leaves the bounds is capped there and the mesh stays closed.
 *
 * Values are handled in the sampler's signed convention (`signedFromValue`): negative inside,
 * non-negative outside, the level at zero. A value of exactly zero counts as outside.
 */
import type { Field } from '../fields/field.js';
import type { Bounds, ProgressFn } from '../types.js';
import { FieldkilnError, throwIfAborted } from '../types.js';
import { IntList, KeyMap } from './key-map.js';
import { makeLattice, denseNodeCount, type Lattice } from './lattice.js';

/** Options for {@link sampleOctree}. */
export interface SampleOctreeOptions {
  /** Finest level: 2^depth cells along the longest side of the bounds. Default: 7. */
  depth?: number;
  /** Iso-level in the field's own units. Default: the field's `defaultLevel`. */
  level?: number;
  /** Bounds to sample, metres. Default: the field's bounds. */
  bounds?: Bounds;
  /**
   * Lipschitz bound for SDF pruning (metres per metre). Default: the field's own promise, else
   * `neuralLipschitz`.
   */
  lipschitz?: number;
  /** Start level of density/occupancy refinement. Default: 5. */
  startDepth?: number;
  /** What to do with NaN/±Inf values: stop with an error, or treat them as outside (with a warning). Default: 'error'. */
  nonfinite?: 'error' | 'outside';
  /** Points per call to `field.evaluate`. Default: 262 144. */
  batchSize?: number;
  signal?: AbortSignal;
  onProgress?: ProgressFn;
}

export const SAMPLE_OCTREE_DEFAULTS = {
  depth: 7,
  startDepth: 5,
  /**
   * Safety factor used as the Lipschitz bound of a neural SDF that promises none. The shared
   * fixtures' gradient norm on the surface reaches 1.11 (manifest `gradient_norm_on_surface`);
   * 1.5 leaves room off the surface. The finest-level flood fill backs it up.
   */
  neuralLipschitz: 1.5,
  nonfinite: 'error' as 'error' | 'outside',
  batchSize: 262_144,
  minDepth: 1,
  maxDepth: 12,
};

/** The sampler's result: the surface cells of the finest lattice with their corner values. */
export interface SurfaceCells {
  lattice: Lattice;
  /** Iso-level used, in the field's units. */
  level: number;
  /** Number of surface cells. */
  count: number;
  /** Cell coordinates (i, j, k), 3 ints per cell, sorted by linear cell index. */
  coords: Int32Array;
  /** Signed corner values (negative inside), 8 per cell, corner c at (c&1, c>>1&1, c>>2&1). */
  corners: Float32Array;
  /** Points evaluated (each at most once). */
  evaluations: number;
  /** Points the dense lattice would have evaluated. */
  denseEvaluations: number;
  /** Lattice nodes on the outer layer that were inside and got forced outside (surface leaves the bounds). */
  closedAtBounds: number;
  /** Non-finite values met (only non-zero with nonfinite 'outside'). */
  nonFinite: number;
  /** Smallest and largest finite raw field value seen. */
  valueRange: [number, number];
}

const BIG = 1e30;

/**
 * Every lattice point the sampler asked for, each evaluated once. Points live in doubled lattice
 * coordinates (X = 2i), so both nodes and the centres of finest cells are integers. New points are
 * queued by `request` and evaluated together by `flush`, in batches.
 */
class PointStore {
  private readonly index: KeyMap;
  readonly coords = new IntList(1 << 16);
  vals = new Float32Array(1 << 14);
  count = 0;
  private evaluated = 0;
  closedAtBounds = 0;
  nonFinite = 0;
  vmin = Infinity;
  vmax = -Infinity;

  constructor(
    private readonly field: Field,
    private readonly level: number,
    private readonly lat: Lattice,
    private readonly opts: { batchSize: number; nonfinite: 'error' | 'outside'; signal?: AbortSignal },
    expected: number,
  ) {
    this.index = new KeyMap(expected);
  }

  /** Index of point (X, Y, Z) in doubled coordinates, queued for evaluation if new. */
  request(X: number, Y: number, Z: number): number {
    const [nx, ny] = this.lat.cells;
    const key = X + (2 * nx + 1) * (Y + (2 * ny + 1) * Z);
    const got = this.index.getOrSet(key, this.count);
    if (got === got) return got; // not NaN: known already
    this.coords.push3(X, Y, Z);
    return this.count++;
  }

  /** Evaluates every queued point. Lattice nodes on the outer layer that come out inside are forced to 0 (outside). */
  async flush(): Promise<void> {
    const { field, level, lat, opts } = this;
    const [nx, ny, nz] = lat.cells;
    const half = 0.5 * lat.cellSize;
    const [ox, oy, oz] = lat.origin;
    if (this.vals.length < this.count) {
      let cap = this.vals.length;
      while (cap < this.count) cap *= 2;
      const next = new Float32Array(cap);
      next.set(this.vals.subarray(0, this.evaluated));
      this.vals = next;
    }
    const c = this.coords.data;
    while (this.evaluated < this.count) {
      throwIfAborted(opts.signal);
      const start = this.evaluated;
      const m = Math.min(opts.batchSize, this.count - start);
      const xyz = new Float32Array(m * 3);
      for (let q = 0; q < m; q++) {
        const t = (start + q) * 3;
        xyz[q * 3] = ox + c[t] * half;
        xyz[q * 3 + 1] = oy + c[t + 1] * half;
        xyz[q * 3 + 2] = oz + c[t + 2] * half;
      }
      const out = await field.evaluate(xyz, opts.signal);
      if (out.length !== m) throw new Error(`sampleOctree: field returned ${out.length} values for ${m} points`);
      let firstBad = -1;
      let bad = 0;
      const sdf = field.kind === 'sdf';
      for (let q = 0; q < m; q++) {
        const v = out[q];
        let s: number;
        if (Number.isFinite(v)) {
          if (v < this.vmin) this.vmin = v;
          if (v > this.vmax) this.vmax = v;
          s = sdf ? v - level : level - v;
        } else {
          if (firstBad < 0) firstBad = q;
          bad++;
          s = BIG;
        }
        if (s < 0) {
          const t = (start + q) * 3;
          const X = c[t], Y = c[t + 1], Z = c[t + 2];
          if (X === 0 || Y === 0 || Z === 0 || X === 2 * nx || Y === 2 * ny || Z === 2 * nz) {
            s = 0;
            this.closedAtBounds++;
          }
        }
        this.vals[start + q] = s;
      }
      if (bad > 0) {
        if (opts.nonfinite === 'error') {
          throw new FieldkilnError(
            `the field returned ${bad} non-finite values (NaN or ±Inf) among ${m} samples; the first at ` +
              `(${fmt(xyz[firstBad * 3])}, ${fmt(xyz[firstBad * 3 + 1])}, ${fmt(xyz[firstBad * 3 + 2])}) m. ` +
              `Pass --nonfinite outside to treat such samples as empty space.`,
          );
        }
        this.nonFinite += bad;
      }
      this.evaluated += m;
    }
  }
}

/**
 * Finds the surface cells of `field` at the finest level of an adaptive octree.
 *
 * @example
 * const cells = await sampleOctree(field, { depth: 8 });
 * const mesh = marchingCubes(cells);
 */
export async function sampleOctree(field: Field, options: SampleOctreeOptions = {}): Promise<SurfaceCells> {
  const depth = options.depth ?? SAMPLE_OCTREE_DEFAULTS.depth;
  if (!Number.isInteger(depth) || depth < SAMPLE_OCTREE_DEFAULTS.minDepth || depth > SAMPLE_OCTREE_DEFAULTS.maxDepth) {
    throw new FieldkilnError(`depth must be an integer from ${SAMPLE_OCTREE_DEFAULTS.minDepth} to ${SAMPLE_OCTREE_DEFAULTS.maxDepth} (got ${depth})`);
  }
  const level = options.level ?? field.defaultLevel;
  if (level === undefined || !Number.isFinite(level)) {
    throw new FieldkilnError(`no iso-level: this ${field.kind} field declares none; pass --level`);
  }
  const bounds = options.bounds ?? field.bounds;
  const signal = options.signal;
  const progress = options.onProgress ?? (() => {});

  const lat = makeLattice(bounds, depth);
  const [nx, ny, nz] = lat.cells;
  const h = lat.cellSize;
  const store = new PointStore(
    field,
    level,
    lat,
    { batchSize: options.batchSize ?? SAMPLE_OCTREE_DEFAULTS.batchSize, nonfinite: options.nonfinite ?? SAMPLE_OCTREE_DEFAULTS.nonfinite, signal },
    1 << 16,
  );

  // Candidate finest cells (i,j,k triples) to test by their corners.
  let finest = new IntList();

  if (field.kind === 'sdf') {
    const L = options.lipschitz ?? field.lipschitz ?? SAMPLE_OCTREE_DEFAULTS.neuralLipschitz;
    if (!(L > 0) || !Number.isFinite(L)) throw new FieldkilnError(`--lipschitz must be a positive number (got ${L})`);
    let active = new IntList(3);
    active.push3(0, 0, 0);
    for (let lev = 0; lev < depth; lev++) {
      progress('sample', lev / (depth + 1));
      const S = 2 ** (depth - lev);
      const boxes = new IntList(active.length * 3);
      const centre: number[] = [];
      const a3 = active.data;
      for (let a = 0; a < active.length; a += 3) {
        const x0 = a3[a] * S, y0 = a3[a + 1] * S, z0 = a3[a + 2] * S;
        const x1 = Math.min(x0 + S, nx), y1 = Math.min(y0 + S, ny), z1 = Math.min(z0 + S, nz);
        if (x0 >= x1 || y0 >= y1 || z0 >= z1) continue;
        centre.push(store.request(x0 + x1, y0 + y1, z0 + z1));
        boxes.push3(x0, y0, z0);
        boxes.push3(x1, y1, z1);
        boxes.push3(a3[a], a3[a + 1], a3[a + 2]);
      }
      await store.flush();
      const next = new IntList(active.length * 4);
      const b9 = boxes.data;
      for (let b = 0, c = 0; b < boxes.length; b += 9, c++) {
        const x0 = b9[b], y0 = b9[b + 1], z0 = b9[b + 2], x1 = b9[b + 3], y1 = b9[b + 4], z1 = b9[b + 5];
        const s = store.vals[centre[c]];
        const halfDiag = 0.5 * h * Math.sqrt((x1 - x0) ** 2 + (y1 - y0) ** 2 + (z1 - z0) ** 2);
        const touches = x0 === 0 || y0 === 0 || z0 === 0 || x1 === nx || y1 === ny || z1 === nz;
        if (!(Math.abs(s) <= L * halfDiag || (s < 0 && touches))) continue;
        const ci = b9[b + 6] * 2, cj = b9[b + 7] * 2, ck = b9[b + 8] * 2;
        for (let q = 0; q < 8; q++) next.push3(ci + (q & 1), cj + ((q >> 1) & 1), ck + ((q >> 2) & 1));
      }
      active = next;
    }
    // `active` now holds finest-level cells (stride 1), children of level d−1 survivors. Each child has
    // two corners known cheaply: one corner of its parent (even coordinates; an eighth of the nodes) and
    // its parent's centre (odd coordinates; mostly evaluated already), which are opposite corners q and
    // c of the child. A zero at p needs |s(q)| ≤ L·|p−q| and |s(c)| ≤ L·|p−c|, and over the cube
    // |p−q| + |p−c| ≤ (1 + √2)·h (its largest value, at the other six corners), so a child is pruned when
    // |s(q)| + |s(c)| > L·(1 + √2)·h, or either alone exceeds L·√3·h, before its other corners are asked for.
    const a3 = active.data;
    const nChildren = active.length / 3;
    const cq = new Int32Array(nChildren).fill(-1);
    const cc = new Int32Array(nChildren).fill(-1);
    for (let a = 0, c = 0; a < active.length; a += 3, c++) {
      const i = a3[a], j = a3[a + 1], k = a3[a + 2];
      if (i >= nx || j >= ny || k >= nz) continue;
      cq[c] = store.request(2 * (i + (i & 1)), 2 * (j + (j & 1)), 2 * (k + (k & 1)));
      cc[c] = store.request(2 * (i + 1 - (i & 1)), 2 * (j + 1 - (j & 1)), 2 * (k + 1 - (k & 1)));
    }
    await store.flush();
    const reach = L * Math.sqrt(3) * h;
    const pairReach = L * (1 + Math.SQRT2) * h;
    finest = new IntList(active.length);
    for (let a = 0, c = 0; a < active.length; a += 3, c++) {
      if (cq[c] < 0) continue;
      const i = a3[a], j = a3[a + 1], k = a3[a + 2];
      const sq = store.vals[cq[c]];
      const sc = store.vals[cc[c]];
      const touches = i === 0 || j === 0 || k === 0 || i === nx - 1 || j === ny - 1 || k === nz - 1;
      const near = Math.abs(sq) <= reach && Math.abs(sc) <= reach && Math.abs(sq) + Math.abs(sc) <= pairReach;
      if (near || (touches && (sq < 0 || sc < 0))) finest.push3(i, j, k);
    }
  } else {
    const s0 = Math.min(options.startDepth ?? SAMPLE_OCTREE_DEFAULTS.startDepth, depth);
    if (!Number.isInteger(s0) || s0 < 0) throw new FieldkilnError(`start depth must be a non-negative integer (got ${s0})`);
    let S = 2 ** (depth - s0);
    let active = new IntList();
    for (let k = 0; k * S < nz; k++) for (let j = 0; j * S < ny; j++) for (let i = 0; i * S < nx; i++) active.push3(i, j, k);
    for (let lev = s0; lev <= depth; lev++) {
      progress('sample', lev / (depth + 1));
      S = 2 ** (depth - lev);
      if (lev === depth) {
        finest = active;
        break;
      }
      const a3 = active.data;
      const corner = new Int32Array((active.length / 3) * 8);
      for (let a = 0, c = 0; a < active.length; a += 3, c++) {
        const x0 = a3[a] * S, y0 = a3[a + 1] * S, z0 = a3[a + 2] * S;
        const x1 = Math.min(x0 + S, nx), y1 = Math.min(y0 + S, ny), z1 = Math.min(z0 + S, nz);
        for (let q = 0; q < 8; q++) corner[8 * c + q] = store.request(2 * (q & 1 ? x1 : x0), 2 * (q & 2 ? y1 : y0), 2 * (q & 4 ? z1 : z0));
      }
      await store.flush();
      const cx = Math.ceil(nx / S), cy = Math.ceil(ny / S), cz = Math.ceil(nz / S);
      const marked: number[] = [];
      const mark = (i: number, j: number, k: number) => {
        if (i >= 0 && j >= 0 && k >= 0 && i < cx && j < cy && k < cz) marked.push(i + cx * (j + cy * k));
      };
      for (let a = 0, c = 0; a < active.length; a += 3, c++) {
        let inside = 0;
        for (let q = 0; q < 8; q++) if (store.vals[corner[8 * c + q]] < 0) inside++;
        if (inside === 0 || inside === 8) continue;
        const i = a3[a], j = a3[a + 1], k = a3[a + 2];
        mark(i, j, k);
        mark(i - 1, j, k); mark(i + 1, j, k); mark(i, j - 1, k); mark(i, j + 1, k); mark(i, j, k - 1); mark(i, j, k + 1);
      }
      const sorted = Float64Array.from(marked).sort();
      const next = new IntList(sorted.length * 24);
      for (let m = 0; m < sorted.length; m++) {
        const key = sorted[m];
        if (m > 0 && key === sorted[m - 1]) continue;
        const i = key % cx, j = Math.floor(key / cx) % cy, k = Math.floor(key / (cx * cy));
        for (let q = 0; q < 8; q++) {
          const a = 2 * i + (q & 1), b = 2 * j + ((q >> 1) & 1), d = 2 * k + ((q >> 2) & 1);
          if (a * (S / 2) < nx && b * (S / 2) < ny && d * (S / 2) < nz) next.push3(a, b, d);
        }
      }
      active = next;
    }
  }

  // Finest level: test candidates by their corners, then follow sign-changing faces (flood fill).
  progress('sample', depth / (depth + 1));
  const cellKey = (i: number, j: number, k: number) => i + nx * (j + ny * k);
  const seen = new KeyMap(finest.length / 3 + 16);
  const surface = new IntList(finest.length);
  const surfaceCorners = new IntList(finest.length * 3);
  let wave = finest;
  while (wave.length > 0) {
    throwIfAborted(signal);
    const fresh = new IntList(wave.length);
    const corner = new IntList(wave.length * 3);
    const w3 = wave.data;
    for (let a = 0; a < wave.length; a += 3) {
      const i = w3[a], j = w3[a + 1], k = w3[a + 2];
      if (seen.getOrSet(cellKey(i, j, k), 1) === 1) continue;
      fresh.push3(i, j, k);
      for (let q = 0; q < 8; q++) corner.push(store.request(2 * (i + (q & 1)), 2 * (j + ((q >> 1) & 1)), 2 * (k + ((q >> 2) & 1))));
    }
    await store.flush();
    const next = new IntList();
    const f3 = fresh.data;
    const cs = corner.data;
    const vals = store.vals;
    for (let a = 0, c = 0; a < fresh.length; a += 3, c++) {
      let mask = 0;
      for (let q = 0; q < 8; q++) if (vals[cs[8 * c + q]] < 0) mask |= 1 << q;
      if (mask === 0 || mask === 255) continue;
      const i = f3[a], j = f3[a + 1], k = f3[a + 2];
      seen.set(cellKey(i, j, k), 2 + surface.length / 3);
      surface.push3(i, j, k);
      for (let q = 0; q < 8; q++) surfaceCorners.push(cs[8 * c + q]);
      // Faces: for axis ax and side sd, the 4 corners with bit ax == sd; follow those that change sign.
      for (let ax = 0; ax < 3; ax++) {
        for (let sd = 0; sd < 2; sd++) {
          const fm = mask & FACE_MASK[2 * ax + sd];
          if (fm === 0 || fm === FACE_MASK[2 * ax + sd]) continue;
          const d = sd ? 1 : -1;
          const ni = i + (ax === 0 ? d : 0), nj = j + (ax === 1 ? d : 0), nk = k + (ax === 2 ? d : 0);
          if (ni < 0 || nj < 0 || nk < 0 || ni >= nx || nj >= ny || nk >= nz) continue;
          if (!seen.has(cellKey(ni, nj, nk))) next.push3(ni, nj, nk);
        }
      }
    }
    wave = next;
  }

  // Deterministic order: by linear cell index.
  const count = surface.length / 3;
  const s3 = surface.data;
  const order = new Float64Array(count);
  for (let c = 0; c < count; c++) order[c] = cellKey(s3[3 * c], s3[3 * c + 1], s3[3 * c + 2]);
  order.sort();
  const coords = new Int32Array(count * 3);
  const corners = new Float32Array(count * 8);
  const sc = surfaceCorners.data;
  for (let r = 0; r < count; r++) {
    const c = seen.get(order[r]) - 2;
    coords[3 * r] = s3[3 * c];
    coords[3 * r + 1] = s3[3 * c + 1];
    coords[3 * r + 2] = s3[3 * c + 2];
    for (let q = 0; q < 8; q++) corners[8 * r + q] = store.vals[sc[8 * c + q]];
  }
  progress('sample', 1);
  return {
    lattice: lat,
    level,
    count,
    coords,
    corners,
    evaluations: store.count,
    denseEvaluations: denseNodeCount(lat),
    closedAtBounds: store.closedAtBounds,
    nonFinite: store.nonFinite,
    valueRange: [store.vmin, store.vmax],
  };
}

/** Corner bits of each face 2·axis + side (corners whose bit `axis` equals `side`). */
const FACE_MASK: readonly number[] = Array.from({ length: 6 }, (_, f) => {
  let m = 0;
  for (let c = 0; c < 8; c++) if (((c >> (f >> 1)) & 1) === (f & 1)) m |= 1 << c;
  return m;
});

function fmt(v: number): string {
  return Number(v.toPrecision(5)).toString();
}
