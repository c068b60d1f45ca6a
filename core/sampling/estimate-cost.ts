/**
 * Estimates, before the real run, how many evaluations and how much memory a bake at `depth` needs:
 * the octree is sampled at a shallow depth (at most `probeDepth`) and its counts are scaled by 4 per
 * extra level, since a surface's cells grow with the square of the resolution. Used as a resource
 * guard: refuse plainly instead of running out of memory halfway.
 */
import type { Field } from '../fields/field.js';
import type { Bounds } from '../types.js';
import { sampleOctree } from './sample-octree.js';

export interface CostEstimate {
  depth: number;
  evaluations: number;
  surfaceCells: number;
  /** Triangles of the raw mesh (about two per surface cell). */
  triangles: number;
  /** Peak bytes the whole bake is expected to hold. */
  bytes: number;
}

/**
 * Bytes per evaluated point (hash slot pair at load ≤ 0.5: 32 B, coordinates 12 B, value 4 B) and per
 * raw triangle (positions, normals, colors, indices, the edge table, the checks and the GLB copy of a
 * vertex-colored mesh), plus a base for the runtime. Kept on the safe side: the demo lantern post at
 * depth 10 (747 k triangles, 1.45 M evaluations) peaked at 372 MB RSS where this model says 556 MB
 * (measured 2026-12-02 with /usr/bin/time on the CLI).
 */
export const COST_MODEL = { bytesPerEvaluation: 48, bytesPerTriangle: 450, baseBytes: 150 * 2 ** 20 };

export async function estimateCost(
  field: Field,
  options: { depth: number; level?: number; bounds?: Bounds; lipschitz?: number; startDepth?: number; probeDepth?: number },
): Promise<CostEstimate> {
  const probe = Math.min(options.depth, options.probeDepth ?? 6);
  const cells = await sampleOctree(field, { ...options, depth: probe, nonfinite: 'outside' });
  return costAt(cells.evaluations, cells.count, probe, options.depth);
}

/** Scales counts measured at depth `from` to depth `to`. */
export function costAt(evaluations: number, surfaceCells: number, from: number, to: number): CostEstimate {
  const f = 4 ** (to - from);
  const e = evaluations * f;
  const c = surfaceCells * f;
  const t = 2 * c;
  return { depth: to, evaluations: e, surfaceCells: c, triangles: t, bytes: COST_MODEL.baseBytes + e * COST_MODEL.bytesPerEvaluation + t * COST_MODEL.bytesPerTriangle };
}

/** The deepest level whose estimate fits in `budgetBytes`, given an estimate at some depth (null if none ≥ 1 fits). */
export function deepestFitting(est: CostEstimate, budgetBytes: number): number | null {
  for (let d = est.depth; d >= 1; d--) {
    const scale = 4 ** (d - est.depth);
    const bytes = COST_MODEL.baseBytes + est.evaluations * scale * COST_MODEL.bytesPerEvaluation + est.triangles * scale * COST_MODEL.bytesPerTriangle;
    if (bytes <= budgetBytes) return d;
  }
  return null;
}
