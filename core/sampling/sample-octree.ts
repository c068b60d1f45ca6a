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
import { signedFromValue } from '../fields/field.js';
import type { Bounds, ProgressFn } from '../types.js';
import { FieldkilnError, throwIfAborted } from '../types.js';
import { KeyMap } from './key-map.js';
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
  const kind = field.kind;
  const nonfinite = options.nonfinite ?? SAMPLE_OCTREE_DEFAULTS.nonfinite;
  const batchSize = options.batchSize ?? SAMPLE_OCTREE_DEFAULTS.batchSize;
  const signal = options.signal;
  const progress = options.onProgress ?? (() => {});

  const lat = makeLattice(bounds, depth);
  const [nx, ny, nz] = lat.cells;
  const h = lat.cellSize;
  const [ox, oy, oz] = lat.origin;
  const NX2 = 2 * nx + 1;
  const NY2 = 2 * ny + 1;
  const key2 = (X: number, Y: number, Z: number) => X + NX2 * (Y + NY2 * Z);

  const cache = new KeyMap(1 << 16);
  let evaluations = 0;
  let nonFiniteCount = 0;
  let vmin = Infinity;
  let vmax = -Infinity;

  /** Evaluates the doubled-lattice points in `pts` (X,Y,Z triples) that are not cached yet. */
  async function evaluate(pts: number[]): Promise<void> {
    const todo: number[] = [];
    for (let p = 0; p < pts.length; p += 3) {
      const k = key2(pts[p], pts[p + 1], pts[p + 2]);
      if (!cache.has(k)) {
        cache.set(k, NaN);
        todo.push(pts[p], pts[p + 1], pts[p + 2]);
      }
    }
    const n = todo.length / 3;
    for (let start = 0; start < n; start += batchSize) {
      throwIfAborted(signal);
      const m = Math.min(batchSize, n - start);
      const xyz = new Float32Array(m * 3);
      for (let q = 0; q < m; q++) {
        const t = (start + q) * 3;
        xyz[q * 3] = ox + todo[t] * 0.5 * h;
        xyz[q * 3 + 1] = oy + todo[t + 1] * 0.5 * h;
        xyz[q * 3 + 2] = oz + todo[t + 2] * 0.5 * h;
      }
      const vals = await field.evaluate(xyz, signal);
      if (vals.length !== m) throw new Error(`sampleOctree: field returned ${vals.length} values for ${m} points`);
      let firstBad = -1;
      let bad = 0;
      for (let q = 0; q < m; q++) {
        const v = vals[q];
        const t = (start + q) * 3;
        let s: number;
        if (Number.isFinite(v)) {
          if (v < vmin) vmin = v;
          if (v > vmax) vmax = v;
          s = signedFromValue(kind, v, level!);
        } else {
          if (firstBad < 0) firstBad = q;
          bad++;
          s = BIG;
        }
        cache.set(key2(todo[t], todo[t + 1], todo[t + 2]), s);
      }
      if (bad > 0) {
        if (nonfinite === 'error') {
          throw new FieldkilnError(
            `the field returned ${bad} non-finite values (NaN or ±Inf) among ${m} samples; the first at ` +
              `(${fmt(xyz[firstBad * 3])}, ${fmt(xyz[firstBad * 3 + 1])}, ${fmt(xyz[firstBad * 3 + 2])}) m. ` +
              `Pass --nonfinite outside to treat such samples as empty space.`,
          );
        }
        nonFiniteCount += bad;
      }
      evaluations += m;
    }
  }

  const isBoundaryNode = (i: number, j: number, k: number) => i <= 0 || j <= 0 || k <= 0 || i >= nx || j >= ny || k >= nz;
  let closedAtBounds = 0;
  const forcedSeen = new KeyMap(1024);
  /** Signed value of lattice node (i,j,k), with the outer layer forced outside. */
  function nodeS(i: number, j: number, k: number): number {
    const s = cache.get(key2(2 * i, 2 * j, 2 * k));
    if (s < 0 && isBoundaryNode(i, j, k)) {
      const key = key2(2 * i, 2 * j, 2 * k);
      if (!forcedSeen.has(key)) {
        forcedSeen.set(key, 1);
        closedAtBounds++;
      }
      return 0;
    }
    return s;
  }

  /** Pushes the 8 corner points of clipped box [lo, hi] (lattice node units) in doubled coordinates. */
  function pushCorners(out: number[], x0: number, y0: number, z0: number, x1: number, y1: number, z1: number): void {
    for (let c = 0; c < 8; c++) out.push(2 * (c & 1 ? x1 : x0), 2 * (c & 2 ? y1 : y0), 2 * (c & 4 ? z1 : z0));
  }
  /** True when the box's corners straddle the level. */
  function boxHasSignChange(x0: number, y0: number, z0: number, x1: number, y1: number, z1: number): boolean {
    let inside = false;
    let outside = false;
    for (let c = 0; c < 8; c++) {
      const s = nodeS(c & 1 ? x1 : x0, c & 2 ? y1 : y0, c & 4 ? z1 : z0);
      if (s < 0) inside = true;
      else outside = true;
      if (inside && outside) return true;
    }
    return false;
  }

  // Candidate finest cells (i,j,k triples) to test by their corners.
  let finest: number[] = [];

  if (kind === 'sdf') {
    const L = options.lipschitz ?? field.lipschitz ?? SAMPLE_OCTREE_DEFAULTS.neuralLipschitz;
    if (!(L > 0) || !Number.isFinite(L)) throw new FieldkilnError(`--lipschitz must be a positive number (got ${L})`);
    let active: number[] = [0, 0, 0];
    for (let lev = 0; lev < depth; lev++) {
      progress('sample', lev / (depth + 1));
      const S = 2 ** (depth - lev);
      const centers: number[] = [];
      const boxes: number[] = [];
      for (let a = 0; a < active.length; a += 3) {
        const x0 = active[a] * S, y0 = active[a + 1] * S, z0 = active[a + 2] * S;
        const x1 = Math.min(x0 + S, nx), y1 = Math.min(y0 + S, ny), z1 = Math.min(z0 + S, nz);
        if (x0 >= x1 || y0 >= y1 || z0 >= z1) continue;
        centers.push(x0 + x1, y0 + y1, z0 + z1);
        boxes.push(x0, y0, z0, x1, y1, z1, active[a], active[a + 1], active[a + 2]);
      }
      await evaluate(centers);
      const next: number[] = [];
      for (let b = 0; b < boxes.length; b += 9) {
        const x0 = boxes[b], y0 = boxes[b + 1], z0 = boxes[b + 2], x1 = boxes[b + 3], y1 = boxes[b + 4], z1 = boxes[b + 5];
        const s = cache.get(key2(x0 + x1, y0 + y1, z0 + z1));
        const halfDiag = 0.5 * h * Math.hypot(x1 - x0, y1 - y0, z1 - z0);
        const touches = x0 === 0 || y0 === 0 || z0 === 0 || x1 === nx || y1 === ny || z1 === nz;
        const keep = Math.abs(s) <= L * halfDiag || (s < 0 && touches);
        if (!keep) continue;
        const ci = boxes[b + 6] * 2, cj = boxes[b + 7] * 2, ck = boxes[b + 8] * 2;
        for (let c = 0; c < 8; c++) next.push(ci + (c & 1), cj + ((c >> 1) & 1), ck + ((c >> 2) & 1));
      }
      active = next;
    }
    // `active` now holds finest-level cells (stride 1), children of level d−1 survivors. Each child has
    // one corner that is a corner of its parent (even coordinates); evaluating those first (an eighth of
    // the nodes) prunes the children whose shared corner is farther than L·√3·h (the child's diagonal)
    // from the level, before the rest of their corners are asked for.
    const shared: number[] = [];
    for (let a = 0; a < active.length; a += 3) {
      const i = active[a], j = active[a + 1], k = active[a + 2];
      if (i < nx && j < ny && k < nz) shared.push(2 * (i + (i & 1)), 2 * (j + (j & 1)), 2 * (k + (k & 1)));
    }
    await evaluate(shared);
    const reach = L * Math.sqrt(3) * h;
    for (let a = 0; a < active.length; a += 3) {
      const i = active[a], j = active[a + 1], k = active[a + 2];
      if (i >= nx || j >= ny || k >= nz) continue;
      const s = cache.get(key2(2 * (i + (i & 1)), 2 * (j + (j & 1)), 2 * (k + (k & 1))));
      const touches = i === 0 || j === 0 || k === 0 || i === nx - 1 || j === ny - 1 || k === nz - 1;
      if (Math.abs(s) <= reach || (s < 0 && touches)) finest.push(i, j, k);
    }
  } else {
    const s0 = Math.min(options.startDepth ?? SAMPLE_OCTREE_DEFAULTS.startDepth, depth);
    if (!Number.isInteger(s0) || s0 < 0) throw new FieldkilnError(`start depth must be a non-negative integer (got ${s0})`);
    // Every cell of the start level.
    let S = 2 ** (depth - s0);
    let active: number[] = [];
    for (let k = 0; k * S < nz; k++) for (let j = 0; j * S < ny; j++) for (let i = 0; i * S < nx; i++) active.push(i, j, k);
    for (let lev = s0; lev <= depth; lev++) {
      progress('sample', lev / (depth + 1));
      S = 2 ** (depth - lev);
      if (lev === depth) {
        finest = active;
        break;
      }
      const pts: number[] = [];
      for (let a = 0; a < active.length; a += 3) {
        const x0 = active[a] * S, y0 = active[a + 1] * S, z0 = active[a + 2] * S;
        pushCorners(pts, x0, y0, z0, Math.min(x0 + S, nx), Math.min(y0 + S, ny), Math.min(z0 + S, nz));
      }
      await evaluate(pts);
      const cx = Math.ceil(nx / S), cy = Math.ceil(ny / S), cz = Math.ceil(nz / S);
      const marked = new Set<number>();
      const mark = (i: number, j: number, k: number) => {
        if (i >= 0 && j >= 0 && k >= 0 && i < cx && j < cy && k < cz) marked.add(i + cx * (j + cy * k));
      };
      for (let a = 0; a < active.length; a += 3) {
        const i = active[a], j = active[a + 1], k = active[a + 2];
        const x0 = i * S, y0 = j * S, z0 = k * S;
        if (!boxHasSignChange(x0, y0, z0, Math.min(x0 + S, nx), Math.min(y0 + S, ny), Math.min(z0 + S, nz))) continue;
        mark(i, j, k);
        mark(i - 1, j, k); mark(i + 1, j, k); mark(i, j - 1, k); mark(i, j + 1, k); mark(i, j, k - 1); mark(i, j, k + 1);
      }
      const sorted = Float64Array.from(marked).sort();
      const next: number[] = [];
      for (const key of sorted) {
        const i = key % cx, j = Math.floor(key / cx) % cy, k = Math.floor(key / (cx * cy));
        for (let c = 0; c < 8; c++) {
          const a = 2 * i + (c & 1), b = 2 * j + ((c >> 1) & 1), d = 2 * k + ((c >> 2) & 1);
          if (a * (S / 2) < nx && b * (S / 2) < ny && d * (S / 2) < nz) next.push(a, b, d);
        }
      }
      active = next;
    }
  }

  // Finest level: test candidates by their corners, then follow sign-changing faces (flood fill).
  progress('sample', depth / (depth + 1));
  const cellKey = (i: number, j: number, k: number) => i + nx * (j + ny * k);
  const seen = new KeyMap(finest.length);
  const surface: number[] = [];
  let wave = finest;
  while (wave.length > 0) {
    throwIfAborted(signal);
    const pts: number[] = [];
    const fresh: number[] = [];
    for (let a = 0; a < wave.length; a += 3) {
      const key = cellKey(wave[a], wave[a + 1], wave[a + 2]);
      if (seen.has(key)) continue;
      seen.set(key, 1);
      fresh.push(wave[a], wave[a + 1], wave[a + 2]);
      pushCorners(pts, wave[a], wave[a + 1], wave[a + 2], wave[a] + 1, wave[a + 1] + 1, wave[a + 2] + 1);
    }
    await evaluate(pts);
    const nextWave: number[] = [];
    for (let a = 0; a < fresh.length; a += 3) {
      const i = fresh[a], j = fresh[a + 1], k = fresh[a + 2];
      let mask = 0;
      for (let c = 0; c < 8; c++) if (nodeS(i + (c & 1), j + ((c >> 1) & 1), k + ((c >> 2) & 1)) < 0) mask |= 1 << c;
      if (mask === 0 || mask === 255) continue;
      surface.push(i, j, k);
      // Faces: for axis a and side s, the 4 corners with bit a == s.
      for (let axis = 0; axis < 3; axis++) {
        for (let side = 0; side < 2; side++) {
          let fm = 0;
          let cnt = 0;
          for (let c = 0; c < 8; c++) {
            if (((c >> axis) & 1) === side) {
              cnt++;
              if (mask & (1 << c)) fm++;
            }
          }
          if (fm === 0 || fm === cnt) continue;
          const ni = i + (axis === 0 ? (side ? 1 : -1) : 0);
          const nj = j + (axis === 1 ? (side ? 1 : -1) : 0);
          const nk = k + (axis === 2 ? (side ? 1 : -1) : 0);
          if (ni < 0 || nj < 0 || nk < 0 || ni >= nx || nj >= ny || nk >= nz) continue;
          if (!seen.has(cellKey(ni, nj, nk))) nextWave.push(ni, nj, nk);
        }
      }
    }
    wave = nextWave;
  }

  // Deterministic order: by linear cell index.
  const count = surface.length / 3;
  const order = new Float64Array(count);
  for (let c = 0; c < count; c++) order[c] = cellKey(surface[3 * c], surface[3 * c + 1], surface[3 * c + 2]);
  order.sort();
  const coords = new Int32Array(count * 3);
  const corners = new Float32Array(count * 8);
  for (let c = 0; c < count; c++) {
    const key = order[c];
    const i = key % nx, j = Math.floor(key / nx) % ny, k = Math.floor(key / (nx * ny));
    coords[3 * c] = i;
    coords[3 * c + 1] = j;
    coords[3 * c + 2] = k;
    for (let q = 0; q < 8; q++) corners[8 * c + q] = nodeS(i + (q & 1), j + ((q >> 1) & 1), k + ((q >> 2) & 1));
  }
  progress('sample', 1);
  return {
    lattice: lat,
    level,
    count,
    coords,
    corners,
    evaluations,
    denseEvaluations: denseNodeCount(lat),
    closedAtBounds,
    nonFinite: nonFiniteCount,
    valueRange: [vmin, vmax],
  };
}

function fmt(v: number): string {
  return Number(v.toPrecision(5)).toString();
}
