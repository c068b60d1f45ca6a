/**
 * The field's outward unit normal at arbitrary points: the normalized gradient of the signed value
 * (`signedFromValue`: negative inside, so it points out for every kind) by central differences,
 * (s(p + h·e_i) − s(p − h·e_i)) / 2h, with all 6·N points sent to the field in one batch. Central
 * differences are exact for linear fields and off by O(h²) otherwise; the pipeline uses the same
 * step as the vertex normals of the full-resolution mesh (`field-gradient-normals.ts`), so the
 * baked normal map and the full mesh shade alike.
 *
 * Where the estimate is unusable (zero or non-finite gradient, or one pointing more than 90° away
 * from the given fallback direction: a wall thinner than 2h) the fallback direction is returned and
 * counted.
 */
import type { Field } from '../fields/field.js';
import { signedFromValue } from '../fields/field.js';
import { throwIfAborted } from '../types.js';

const NAME = 'estimateFieldNormals';

/** Options for {@link estimateFieldNormals}. */
export interface EstimateFieldNormalsOptions {
  /** Iso-level, field units (only the sign convention depends on it). Required. */
  level: number;
  /** Central-difference step h, metres. Required. */
  step: number;
  signal?: AbortSignal;
}

/** Result of {@link estimateFieldNormals}. */
export interface EstimateFieldNormalsResult {
  /** Unit normals, 3 floats per point. */
  normals: Float32Array;
  /** Points that took the fallback direction. */
  fallbacks: number;
  /** Points sent to the field (6 per point). */
  evaluations: number;
}

/**
 * Outward unit normals of the field at `points` (see the file comment).
 * @param points 3 floats per point, metres.
 * @param fallback 3 floats per point, unit: used where the gradient is unusable.
 * @example
 * const { normals } = await estimateFieldNormals(field, onSurface, texelNormals, { level: 0, step: cellSize / 2 });
 */
export async function estimateFieldNormals(
  field: Field,
  points: Float32Array,
  fallback: Float32Array,
  options: EstimateFieldNormalsOptions,
): Promise<EstimateFieldNormalsResult> {
  const h = options.step;
  if (!(h > 0) || !Number.isFinite(h)) throw new Error(`${NAME}: step must be a positive number of metres (got ${h})`);
  if (points.length % 3 !== 0 || fallback.length !== points.length) throw new Error(`${NAME}: points and fallback must hold 3 floats per point each`);
  throwIfAborted(options.signal);
  const n = points.length / 3;
  const q = new Float32Array(18 * n);
  for (let i = 0; i < n; i++) {
    const x = points[3 * i], y = points[3 * i + 1], z = points[3 * i + 2];
    // Order: +x, −x, +y, −y, +z, −z.
    for (let k = 0; k < 6; k++) {
      const o = 18 * i + 3 * k;
      const d = k % 2 === 0 ? h : -h;
      q[o] = k >> 1 === 0 ? x + d : x;
      q[o + 1] = k >> 1 === 1 ? y + d : y;
      q[o + 2] = k >> 1 === 2 ? z + d : z;
    }
  }
  const f = await field.evaluate(q, options.signal);
  const s = (j: number) => signedFromValue(field.kind, f[j], options.level);
  const normals = new Float32Array(3 * n);
  let fallbacks = 0;
  for (let i = 0; i < n; i++) {
    const o = 6 * i;
    const gx = s(o) - s(o + 1), gy = s(o + 2) - s(o + 3), gz = s(o + 4) - s(o + 5);
    const len = Math.hypot(gx, gy, gz);
    const fx = fallback[3 * i], fy = fallback[3 * i + 1], fz = fallback[3 * i + 2];
    if (len > 0 && Number.isFinite(len) && gx * fx + gy * fy + gz * fz > 0) {
      normals[3 * i] = gx / len;
      normals[3 * i + 1] = gy / len;
      normals[3 * i + 2] = gz / len;
    } else {
      normals[3 * i] = fx;
      normals[3 * i + 1] = fy;
      normals[3 * i + 2] = fz;
      fallbacks++;
    }
  }
  return { normals, fallbacks, evaluations: 6 * n };
}
