/**
 * Hermite data of a surface: for every sign-changing edge of the finest lattice, the point where the
 * surface crosses it and the field's unit normal there (Ju, Losasso, Schaefer, Warren 2002, "Dual
 * Contouring of Hermite Data"). This is what dual contouring places its vertices from.
 *
 * - Crossing: up to `rootSteps` steps of the Illinois method (a safeguarded regula falsi: Dowell and Jarratt 1971,
 *   "A modified regula falsi method for computing the root of an equation") on the field itself,
 *   starting from the linear-interpolation point, which is the first regula falsi step. The bracket
 *   always holds a sign change, so the root never leaves the edge. All edges still open take one step
 *   per pass, and each pass is one batch of field evaluations. An edge stops when its value change
 *   falls below `ROOT_TOLERANCE` of the value difference along the edge (about 1e-5 cell widths for a
 *   near-linear field) or the bracket is that short. The final point is the regula falsi point of the
 *   last bracket, with the original (unhalved) end values.
 * - Normal: central differences of the field at the crossing, step `gradientStep` cell widths, the 6
 *   points of every crossing in one batch. The difference is divided by the distance between the two
 *   float32 points actually evaluated, so rounding of the coordinates does not bias the gradient.
 *   Normals point from inside to outside (up the sampler's signed value).
 * - Forced boundary nodes: the sampler forces inside nodes of the lattice's outer layer to the value
 *   0 (outside) so that a surface leaving the bounds is capped. An edge from an inside node to such a
 *   node is not root-found on the field; its crossing is that outer node and its normal the bounds'
 *   outward normal, so the cap comes out flat and its rim sharp.
 * - Non-finite values during root finding end that edge's search at its current estimate; a
 *   non-finite or zero gradient falls back to the edge's own direction (from inside to outside). Both
 *   are counted, neither throws.
 *
 * Every point evaluated here is counted in `extraEvaluations`: the sampler's corner values are
 * reused, never evaluated again.
 */
import type { Field } from '../fields/field.js';
import { signedFromValue } from '../fields/field.js';
import type { SurfaceCells } from '../sampling/sample-octree.js';
import { KeyMap } from '../sampling/key-map.js';
import { throwIfAborted } from '../types.js';
import { EDGE_AXIS, EDGE_CORNERS } from './cell-loops.js';

const NAME = 'findHermiteData';

/** An edge stops root finding when |value change| < this × |value difference along the edge|, or its bracket is this short (in edge lengths). */
export const ROOT_TOLERANCE = 1e-5;

/** Options for {@link findHermiteData}. */
export interface HermiteDataOptions {
  /** Root-finding passes (field evaluations per edge at most). 0 keeps the linear-interpolation point. Default: 8. */
  rootSteps?: number;
  /** Central-difference step for the normal, in cell widths. Default: 0.01. */
  gradientStep?: number;
  /** Points per `field.evaluate` call; a pass larger than this is split into several calls. Default: 1 048 576. */
  batchSize?: number;
  signal?: AbortSignal;
}

export const HERMITE_DATA_DEFAULTS: Required<Omit<HermiteDataOptions, 'signal'>> = {
  rootSteps: 8,
  gradientStep: 0.01,
  batchSize: 1_048_576,
};

/** Hermite data: one crossing per sign-changing lattice edge of the surface cells. */
export interface HermiteData {
  /** Number of crossings (sign-changing edges). */
  count: number;
  /**
   * Lattice edge of each crossing: `3 · nodeKey(lower end) + axis`, with nodeKey as in `lattice.ts`
   * (`i + (nx+1)(j + (ny+1)k)`). Float64 holding integers.
   */
  keys: Float64Array;
  /** Edge key → crossing index. */
  index: KeyMap;
  /** Crossing points, metres, 3 floats per crossing. */
  points: Float64Array;
  /** Unit normals pointing outside (toward larger signed value), 3 floats per crossing. */
  normals: Float64Array;
  /** 1 when the edge's lower end (smaller coordinate along its axis) is the inside one. */
  lowerInside: Uint8Array;
  /** Crossings placed on the bounds (edge to a forced outer-layer node), not root-found. */
  atBounds: number;
  /** Field evaluations made here (root finding and gradients). */
  extraEvaluations: number;
  /** Non-finite values met (root finding stopped early, or a normal fell back). */
  nonFinite: number;
  /** Normals that fell back to the edge direction (zero or non-finite gradient). */
  normalFallbacks: number;
}

/**
 * Finds the crossing point and unit normal of every sign-changing lattice edge of `cells`.
 *
 * @param cells - The sampler's surface cells (signed corner values, negative inside).
 * @param field - The field the cells were sampled from (same bounds, kind; level `cells.level`).
 * @param options - See {@link HermiteDataOptions}.
 * @returns The crossings, in the order their edges are first met walking the cells in order and each
 *   cell's 12 edges in order (deterministic).
 * @throws Error on misuse (arrays of the wrong length, options out of range, a field that returns the
 *   wrong number of values).
 *
 * @example
 * const cells = await sampleOctree(field, { depth: 7 });
 * const h = await findHermiteData(cells, field);
 * // h.points[3 * i..], h.normals[3 * i..] for crossing i
 */
export async function findHermiteData(cells: SurfaceCells, field: Field, options: HermiteDataOptions = {}): Promise<HermiteData> {
  const rootSteps = options.rootSteps ?? HERMITE_DATA_DEFAULTS.rootSteps;
  const gradientStep = options.gradientStep ?? HERMITE_DATA_DEFAULTS.gradientStep;
  const batchSize = options.batchSize ?? HERMITE_DATA_DEFAULTS.batchSize;
  const signal = options.signal;
  if (!Number.isInteger(rootSteps) || rootSteps < 0 || rootSteps > 64) throw new Error(`${NAME}: rootSteps must be an integer from 0 to 64 (got ${rootSteps})`);
  if (!(gradientStep > 0 && gradientStep <= 0.5)) throw new Error(`${NAME}: gradientStep must be in (0, 0.5] cell widths (got ${gradientStep})`);
  if (!Number.isInteger(batchSize) || batchSize < 6) throw new Error(`${NAME}: batchSize must be an integer of at least 6 (got ${batchSize})`);
  const { lattice, count: cellCount, coords, corners, level } = cells;
  if (coords.length !== 3 * cellCount || corners.length !== 8 * cellCount) {
    throw new Error(`${NAME}: cells hold ${coords.length / 3} coordinates and ${corners.length / 8} corner sets for count ${cellCount}`);
  }
  const kind = field.kind;
  const [nx, ny, nz] = lattice.cells;
  const h = lattice.cellSize;
  const origin = lattice.origin;
  const nodeKey = (i: number, j: number, k: number) => i + (nx + 1) * (j + (ny + 1) * k);
  const onOuterLayer = (i: number, j: number, k: number) => i <= 0 || j <= 0 || k <= 0 || i >= nx || j >= ny || k >= nz;

  // 1. Collect the sign-changing edges, each once.
  const index = new KeyMap(cellCount * 2);
  const keyList: number[] = [];
  const lower: number[] = []; // i, j, k, axis
  const ends: number[] = []; // s0, s1
  for (let c = 0; c < cellCount; c++) {
    const i = coords[3 * c], j = coords[3 * c + 1], k = coords[3 * c + 2];
    for (let e = 0; e < 12; e++) {
      const c0 = EDGE_CORNERS[e][0], c1 = EDGE_CORNERS[e][1];
      const s0 = corners[8 * c + c0], s1 = corners[8 * c + c1];
      if (s0 < 0 === s1 < 0) continue;
      const a = EDGE_AXIS[e];
      const i0 = i + (c0 & 1), j0 = j + ((c0 >> 1) & 1), k0 = k + ((c0 >> 2) & 1);
      const key = 3 * nodeKey(i0, j0, k0) + a;
      if (index.has(key)) continue;
      index.set(key, keyList.length);
      keyList.push(key);
      lower.push(i0, j0, k0, a);
      ends.push(s0, s1);
    }
  }
  const n = keyList.length;
  const keys = Float64Array.from(keyList);
  const t = new Float64Array(n); // crossing parameter along the edge, 0 at the lower end
  const lowerInside = new Uint8Array(n);
  const boundsNormalSign = new Int8Array(n); // ±1 for crossings at a forced node, 0 otherwise
  let atBounds = 0;
  let nonFinite = 0;
  let extraEvaluations = 0;

  /** Evaluates `pts` (3 floats per point) in batches; returns signed values (NaN stays NaN). */
  async function evaluateSigned(pts: Float32Array): Promise<Float64Array> {
    const m = pts.length / 3;
    const out = new Float64Array(m);
    for (let start = 0; start < m; start += batchSize) {
      throwIfAborted(signal);
      const cnt = Math.min(batchSize, m - start);
      const chunk = start === 0 && cnt === m ? pts : pts.subarray(3 * start, 3 * (start + cnt));
      const vals = await field.evaluate(chunk, signal);
      if (vals.length !== cnt) throw new Error(`${NAME}: field returned ${vals.length} values for ${cnt} points`);
      for (let q = 0; q < cnt; q++) {
        const v = vals[q];
        out[start + q] = Number.isFinite(v) ? signedFromValue(kind, v, level) : NaN;
      }
      extraEvaluations += cnt;
    }
    return out;
  }

  // 2. Root finding (Illinois), all open edges one step per pass.
  const a0 = new Float64Array(n), b0 = new Float64Array(n); // bracket in t
  const fa = new Float64Array(n), fb = new Float64Array(n); // (possibly halved) end values
  const faTrue = new Float64Array(n), fbTrue = new Float64Array(n);
  const side = new Int8Array(n);
  const open: number[] = [];
  for (let x = 0; x < n; x++) {
    const i0 = lower[4 * x], j0 = lower[4 * x + 1], k0 = lower[4 * x + 2], ax = lower[4 * x + 3];
    const s0 = ends[2 * x], s1 = ends[2 * x + 1];
    lowerInside[x] = s0 < 0 ? 1 : 0;
    // The outside end of an edge whose inside end is interior: a forced node reads exactly 0 there.
    const outI = s0 < 0 ? 1 : 0;
    const oi = i0 + (ax === 0 ? outI : 0), oj = j0 + (ax === 1 ? outI : 0), ok = k0 + (ax === 2 ? outI : 0);
    const sOut = s0 < 0 ? s1 : s0;
    if (sOut === 0 && onOuterLayer(oi, oj, ok)) {
      t[x] = outI;
      boundsNormalSign[x] = outI ? 1 : -1;
      atBounds++;
      continue;
    }
    if (s1 === 0 && s0 < 0) {
      t[x] = 1; // the field is exactly at the level on the node
      continue;
    }
    if (s0 === 0 && s1 < 0) {
      t[x] = 0;
      continue;
    }
    a0[x] = 0;
    b0[x] = 1;
    fa[x] = faTrue[x] = s0;
    fb[x] = fbTrue[x] = s1;
    t[x] = s0 / (s0 - s1);
    if (!(t[x] > 0 && t[x] < 1)) t[x] = 0.5;
    open.push(x);
  }
  let active = open;
  for (let step = 0; step < rootSteps && active.length > 0; step++) {
    const pts = new Float32Array(active.length * 3);
    for (let q = 0; q < active.length; q++) {
      const x = active[q];
      const ax = lower[4 * x + 3];
      pts[3 * q] = origin[0] + h * (lower[4 * x] + (ax === 0 ? t[x] : 0));
      pts[3 * q + 1] = origin[1] + h * (lower[4 * x + 1] + (ax === 1 ? t[x] : 0));
      pts[3 * q + 2] = origin[2] + h * (lower[4 * x + 2] + (ax === 2 ? t[x] : 0));
    }
    const vals = await evaluateSigned(pts);
    const next: number[] = [];
    for (let q = 0; q < active.length; q++) {
      const x = active[q];
      const f = vals[q];
      const tx = t[x];
      if (Number.isNaN(f)) {
        nonFinite++;
        continue; // keep the current estimate
      }
      if (f === 0) continue; // exactly on the level
      const scale = valueScale(ends[2 * x], ends[2 * x + 1]);
      if (f < 0 === fa[x] < 0) {
        a0[x] = tx;
        fa[x] = f;
        faTrue[x] = f;
        if (side[x] === -1) fb[x] *= 0.5;
        side[x] = -1;
      } else {
        b0[x] = tx;
        fb[x] = f;
        fbTrue[x] = f;
        if (side[x] === 1) fa[x] *= 0.5;
        side[x] = 1;
      }
      const done = Math.abs(f) <= ROOT_TOLERANCE * scale || b0[x] - a0[x] <= ROOT_TOLERANCE;
      if (done || step === rootSteps - 1) {
        // Final estimate: regula falsi on the last bracket with its true end values.
        const ft = a0[x] - (faTrue[x] * (b0[x] - a0[x])) / (fbTrue[x] - faTrue[x]);
        t[x] = ft > a0[x] && ft < b0[x] ? ft : 0.5 * (a0[x] + b0[x]);
        continue;
      }
      let nt = a0[x] - (fa[x] * (b0[x] - a0[x])) / (fb[x] - fa[x]);
      if (!(nt > a0[x] && nt < b0[x])) nt = 0.5 * (a0[x] + b0[x]);
      t[x] = nt;
      next.push(x);
    }
    active = next;
  }

  // 3. Crossing points and normals: central differences, 6 points per root-found crossing.
  const points = new Float64Array(3 * n);
  const normals = new Float64Array(3 * n);
  const needGrad: number[] = [];
  for (let x = 0; x < n; x++) {
    const ax = lower[4 * x + 3];
    points[3 * x] = origin[0] + h * (lower[4 * x] + (ax === 0 ? t[x] : 0));
    points[3 * x + 1] = origin[1] + h * (lower[4 * x + 1] + (ax === 1 ? t[x] : 0));
    points[3 * x + 2] = origin[2] + h * (lower[4 * x + 2] + (ax === 2 ? t[x] : 0));
    if (boundsNormalSign[x] !== 0) normals[3 * x + ax] = boundsNormalSign[x];
    else needGrad.push(x);
  }
  let normalFallbacks = 0;
  if (needGrad.length > 0) {
    const delta = gradientStep * h;
    const pts = new Float32Array(needGrad.length * 18);
    for (let q = 0; q < needGrad.length; q++) {
      const x = needGrad[q];
      for (let d = 0; d < 3; d++) {
        for (let sgn = 0; sgn < 2; sgn++) {
          const o = 18 * q + 6 * d + 3 * sgn;
          pts[o] = points[3 * x];
          pts[o + 1] = points[3 * x + 1];
          pts[o + 2] = points[3 * x + 2];
          pts[o + d] = points[3 * x + d] + (sgn ? delta : -delta);
        }
      }
    }
    const vals = await evaluateSigned(pts);
    for (let q = 0; q < needGrad.length; q++) {
      const x = needGrad[q];
      let gx = 0, gy = 0, gz = 0;
      let ok = true;
      for (let d = 0; d < 3; d++) {
        const o = 6 * q + 2 * d;
        const fm = vals[o], fp = vals[o + 1];
        const span = pts[3 * (o + 1) + d] - pts[3 * o + d]; // actual float32 distance
        if (!Number.isFinite(fm) || !Number.isFinite(fp) || !(span > 0)) {
          ok = false;
          break;
        }
        const g = (fp - fm) / span;
        if (d === 0) gx = g;
        else if (d === 1) gy = g;
        else gz = g;
      }
      const len = Math.hypot(gx, gy, gz);
      if (!ok || !(len > 0) || !Number.isFinite(len)) {
        if (!ok) nonFinite++;
        normalFallbacks++;
        const ax = lower[4 * x + 3];
        normals[3 * x + ax] = lowerInside[x] ? 1 : -1;
        continue;
      }
      normals[3 * x] = gx / len;
      normals[3 * x + 1] = gy / len;
      normals[3 * x + 2] = gz / len;
    }
  }
  return { count: n, keys, index, points, normals, lowerInside, atBounds, extraEvaluations, nonFinite, normalFallbacks };
}

/**
 * The value difference along an edge, for the stopping test. The sampler stores non-finite corner
 * values as a huge placeholder (outside); then twice the finite end's magnitude stands in.
 */
function valueScale(s0: number, s1: number): number {
  const HUGE = 1e29;
  if (Math.abs(s0) < HUGE && Math.abs(s1) < HUGE) return Math.abs(s0 - s1);
  return 2 * Math.min(Math.abs(s0), Math.abs(s1));
}
