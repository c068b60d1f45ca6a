/**
 * Moves points of a low-poly surface onto the field's own surface, each along its own direction
 * (the interpolated vertex normal), within ±`maxDistance`. Every step sends all unfinished points
 * to the field in one batch.
 *
 * - SDF: Newton's method along the ray, s(t) = f(p + t·d) − level. The first step assumes the
 *   slope an SDF has along its gradient (1), so t₁ = −s(0); after that the slope is the secant
 *   through the last two samples (Newton with the derivative estimated from the values already
 *   paid for, which costs one evaluation per step instead of four). It stops when a step moves
 *   less than `tolerance`. Points whose slope turns non-positive (the ray runs along or away from
 *   the surface), whose step leaves ±maxDistance, or that do not settle go to the search below.
 * - Density and occupancy (and the SDF points above): a short search. The ray is sampled at
 *   `searchSamples` evenly spaced points over ±maxDistance (one batch), the sign change nearest
 *   t = 0 is kept, and regula falsi with the Illinois modification (Dowell and Jarratt 1971, "A
 *   modified regula falsi method for computing the root of an equation") narrows it to `tolerance`.
 *
 * Values are read in the signed convention of `signedFromValue` (negative inside), so one code
 * path serves every kind. Points where nothing is found keep their position and are counted.
 */
import type { Field } from '../fields/field.js';
import { signedFromValue } from '../fields/field.js';
import { throwIfAborted } from '../types.js';

const NAME = 'projectToSurface';

/** Options for {@link projectToSurface}. */
export interface ProjectToSurfaceOptions {
  /** Iso-level, field units. Required. */
  level: number;
  /** How far along ±direction the surface is looked for, metres. Required. */
  maxDistance: number;
  /** Stop when the root is known to within this, metres. Required. */
  tolerance: number;
  /** Newton (secant) steps for an SDF before falling back to the search. Default: 6. */
  newtonSteps?: number;
  /** Samples along the ray in the search (odd, so t = 0 is one of them). Default: 9. */
  searchSamples?: number;
  /** Regula falsi steps after the search. Default: 8. */
  refineSteps?: number;
  signal?: AbortSignal;
}

/** Defaults of {@link projectToSurface}. */
export const PROJECT_TO_SURFACE_DEFAULTS = { newtonSteps: 6, searchSamples: 9, refineSteps: 8 };

/** Result of {@link projectToSurface}. */
export interface ProjectToSurfaceResult {
  /** 3 floats per point: on the surface, or the input point where none was found. */
  points: Float32Array;
  /** Per point: 1 when it reached the surface. */
  found: Uint8Array;
  /** Points sent to the field. */
  evaluations: number;
}

/**
 * Projects `points` onto the field's surface along `directions` (see the file comment).
 * @param points 3 floats per point, metres.
 * @param directions 3 floats per point, unit, pointing out of the surface.
 * @example
 * const { points: onSurface } = await projectToSurface(field, texelPoints, texelNormals, { level: 0, maxDistance: 0.01, tolerance: 1e-5 });
 */
export async function projectToSurface(
  field: Field,
  points: Float32Array,
  directions: Float32Array,
  options: ProjectToSurfaceOptions,
): Promise<ProjectToSurfaceResult> {
  const n = points.length / 3;
  if (points.length % 3 !== 0 || directions.length !== points.length) throw new Error(`${NAME}: points and directions must hold 3 floats per point each`);
  const R = options.maxDistance;
  const tol = options.tolerance;
  if (!(R > 0) || !(tol > 0)) throw new Error(`${NAME}: maxDistance and tolerance must be positive metres`);
  const samples = Math.max(3, (options.searchSamples ?? PROJECT_TO_SURFACE_DEFAULTS.searchSamples) | 1);
  const refineSteps = options.refineSteps ?? PROJECT_TO_SURFACE_DEFAULTS.refineSteps;
  const newtonSteps = options.newtonSteps ?? PROJECT_TO_SURFACE_DEFAULTS.newtonSteps;
  const { kind } = field;
  const level = options.level;
  let evaluations = 0;

  /** Signed values at p_i + t_i d_i for the listed points. */
  const valuesAt = async (which: Uint32Array | number[], t: Float64Array | number[], count: number) => {
    throwIfAborted(options.signal);
    const q = new Float32Array(3 * count);
    for (let j = 0; j < count; j++) {
      const i = which[j];
      for (let k = 0; k < 3; k++) q[3 * j + k] = points[3 * i + k] + t[j] * directions[3 * i + k];
    }
    evaluations += count;
    const v = await field.evaluate(q, options.signal);
    const s = new Float64Array(count);
    for (let j = 0; j < count; j++) s[j] = signedFromValue(kind, v[j], level);
    return s;
  };

  const tOut = new Float64Array(n);
  const found = new Uint8Array(n);
  let pending: number[] = [];

  if (kind === 'sdf' && newtonSteps > 0) {
    let active = Uint32Array.from({ length: n }, (_, i) => i);
    let t0 = new Float64Array(n);
    let s0 = await valuesAt(active, t0, n);
    let t1 = new Float64Array(n);
    for (let j = 0; j < n; j++) t1[j] = Number.isFinite(s0[j]) ? Math.max(-R, Math.min(R, -s0[j])) : NaN;
    for (let step = 0; step < newtonSteps && active.length > 0; step++) {
      const s1 = await valuesAt(active, t1, active.length);
      const next: number[] = [];
      const nt0: number[] = [], ns0: number[] = [], nt1: number[] = [];
      for (let j = 0; j < active.length; j++) {
        const i = active[j];
        if (!Number.isFinite(s1[j]) || !Number.isFinite(t1[j])) {
          pending.push(i);
          continue;
        }
        const slope = (s1[j] - s0[j]) / (t1[j] - t0[j]);
        if (s1[j] === 0 || t1[j] === t0[j]) {
          tOut[i] = t1[j];
          found[i] = 1;
          continue;
        }
        if (!(slope > 0)) {
          pending.push(i);
          continue;
        }
        const t2 = t1[j] - s1[j] / slope;
        if (!(Math.abs(t2) <= R)) {
          pending.push(i);
          continue;
        }
        if (Math.abs(t2 - t1[j]) < tol) {
          tOut[i] = t2;
          found[i] = 1;
          continue;
        }
        next.push(i);
        nt0.push(t1[j]);
        ns0.push(s1[j]);
        nt1.push(t2);
      }
      active = Uint32Array.from(next);
      t0 = Float64Array.from(nt0);
      s0 = Float64Array.from(ns0);
      t1 = Float64Array.from(nt1);
    }
    for (const i of active) pending.push(i);
  } else {
    pending = Array.from({ length: n }, (_, i) => i);
  }

  if (pending.length > 0) {
    // The search: `samples` points over [−R, R] per pending point, in one batch.
    const m = pending.length;
    const which = new Uint32Array(m * samples);
    const ts = new Float64Array(m * samples);
    for (let j = 0; j < m; j++) {
      for (let k = 0; k < samples; k++) {
        which[j * samples + k] = pending[j];
        ts[j * samples + k] = -R + (2 * R * k) / (samples - 1);
      }
    }
    const sv = await valuesAt(which, ts, m * samples);
    const lo = new Float64Array(m), hi = new Float64Array(m), slo = new Float64Array(m), shi = new Float64Array(m);
    const bracketed: number[] = [];
    for (let j = 0; j < m; j++) {
      let best = -1;
      let bestMid = Infinity;
      for (let k = 0; k + 1 < samples; k++) {
        const a = sv[j * samples + k], b = sv[j * samples + k + 1];
        if (!Number.isFinite(a) || !Number.isFinite(b) || (a < 0) === (b < 0)) continue;
        const mid = Math.abs(ts[j * samples + k] + ts[j * samples + k + 1]);
        if (mid < bestMid) {
          bestMid = mid;
          best = k;
        }
      }
      if (best < 0) continue;
      lo[j] = ts[j * samples + best];
      hi[j] = ts[j * samples + best + 1];
      slo[j] = sv[j * samples + best];
      shi[j] = sv[j * samples + best + 1];
      bracketed.push(j);
    }
    // Illinois regula falsi on every bracket at once.
    const side = new Int8Array(m);
    const last = new Float64Array(m).fill(NaN);
    let active = bracketed;
    for (let step = 0; step < refineSteps && active.length > 0; step++) {
      const tMid = active.map((j) => (slo[j] * hi[j] - shi[j] * lo[j]) / (slo[j] - shi[j]));
      const sMid = await valuesAt(
        active.map((j) => pending[j]),
        tMid,
        active.length,
      );
      const next: number[] = [];
      active.forEach((j, r) => {
        const t = tMid[r], s = sMid[r];
        if (!Number.isFinite(s)) {
          // Keep the bracket's better end.
          tOut[pending[j]] = Math.abs(slo[j]) < Math.abs(shi[j]) ? lo[j] : hi[j];
          found[pending[j]] = 1;
          return;
        }
        if ((s < 0) === (slo[j] < 0)) {
          lo[j] = t;
          slo[j] = s;
          if (side[j] === -1) shi[j] /= 2;
          side[j] = -1;
        } else {
          hi[j] = t;
          shi[j] = s;
          if (side[j] === 1) slo[j] /= 2;
          side[j] = 1;
        }
        const settled = Math.abs(t - last[j]) < tol;
        last[j] = t;
        if (hi[j] - lo[j] < tol || s === 0 || settled) {
          tOut[pending[j]] = t;
          found[pending[j]] = 1;
        } else next.push(j);
      });
      active = next;
    }
    for (const j of active) {
      tOut[pending[j]] = (slo[j] * hi[j] - shi[j] * lo[j]) / (slo[j] - shi[j]);
      found[pending[j]] = 1;
    }
  }

  const out = new Float32Array(points.length);
  for (let i = 0; i < n; i++) {
    const t = found[i] ? tOut[i] : 0;
    for (let k = 0; k < 3; k++) out[3 * i + k] = points[3 * i + k] + t * directions[3 * i + k];
  }
  return { points: out, found, evaluations };
}
