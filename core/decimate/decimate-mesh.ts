/**
 * Decimation to a triangle budget with meshoptimizer's simplifier (quadric error metrics: Garland
 * and Heckbert 1997, "Surface simplification using quadric error metrics"; with attributes after
 * Hoppe 1999, "New quadric metric for simplifying meshes with appearance attributes"), followed by
 * checks that the result is still the same kind of solid.
 *
 * The simplifier works on positions plus the vertex normals and colors as weighted attributes, and
 * in absolute world units (`ErrorAbsolute`). It collapses edges onto existing vertices, so every
 * output vertex is an input vertex, with its normal and color. It does not promise manifold output
 * (../shared/DEPENDENCIES.md §3: duplicated triangles, non-manifold edges, genus changes), so each
 * attempt is repaired and checked:
 *
 * 1. repair: folds (two triangles on the same three vertices, wound oppositely) and duplicates are
 *    removed (`remove-duplicate-triangles.ts`), then degenerate triangles (`remove-degenerate-triangles.ts`);
 * 2. check: no new boundary, non-manifold or inconsistently wound edges, no new non-manifold
 *    vertices, no degenerate triangles, and, for a closed input, the same number of components and
 *    the same genus.
 *
 * Attempts, until one passes: the budget as asked; the budget with `Regularize` (smoother
 * triangles, more robust, slightly larger error); then stopping short, at budgets 1.25×, 1.25²×, …
 * the asked one. Whatever is kept, a warning says why when it is not the first attempt. If nothing
 * passes, the input is returned unchanged, with a warning.
 *
 * Notes from trying (torus recipe R 0.6 r 0.2, depth 8, 226 640 → 20 000 triangles, busy 2-core machine):
 * - With area-weighted normals as attributes, normal weight 0.5 left one folded pair (one edge used
 *   4 times), 0.1 left two, 0.25 and 1 none; plain `simplify` none. `Regularize` fixed it too, but
 *   raised the largest distance from the true surface from 1.16 mm to 1.52 mm (plain MC of similar
 *   size: 1.45 mm), so it is the second attempt and the fold repair comes first.
 * - With field normals as attributes and the fold repair, every weight passed on the first attempt;
 *   true surface → mesh distance for weights 0 / 0.1 / 0.25 / 0.5 / 1: 1.43 / 1.02 / 1.11 / 1.11 /
 *   1.44 mm. 0.5 is the default (0.1 did better here but left more folds without normals from the field).
 * - A torus asked for 20 triangles (depth 5) pinches at 20, 25 and 31 triangles and stops short at 38.
 * - Measuring `maxError` (below) costs about as much as the simplification itself: 1.6 s for the
 *   226 640 → 20 000 case.
 *
 * `maxError` in the result is measured, not the simplifier's estimate (with attributes, its
 * estimate mixes in attribute error): the largest distance between the input and the output,
 * sampled at vertices and triangle centroids of both (`measure-deviation.ts`).
 */
import { MeshoptSimplifier } from 'meshoptimizer';
import { positionBounds, type MeshData } from '../types.js';
import { analyzeMesh, type MeshReport } from '../checks/analyze-mesh.js';
import type { TriangleGrid } from './triangle-grid.js';
import { compactMesh } from '../cleanup/compact-mesh.js';
import { removeDegenerateTriangles } from '../cleanup/remove-degenerate-triangles.js';
import { removeDuplicateTriangles } from '../cleanup/remove-duplicate-triangles.js';
import { measureDeviation } from './measure-deviation.js';

const NAME = 'decimateMesh';

/** Options for {@link decimateMesh}. */
export interface DecimateOptions {
  /** At most this many triangles (≥ 4). Required. */
  targetTriangles: number;
  /** Weight of each normal component in the simplifier's attribute error. Default: 0.5. */
  normalWeight?: number;
  /** Weight of each color component (linear RGB 0..1). Default: 1. */
  colorWeight?: number;
  /** Attempts before giving up (see the file comment). Default: 8. */
  maxAttempts?: number;
  /** The input's own topology figures, when the caller already has them (saves one analysis). */
  inputReport?: MeshReport;
  /**
   * A distance grid over the input's triangles, when the caller already has one (the bake builds one over
   * the full mesh for the base level, and build-lods.ts measures every level from the full mesh with it):
   * built once instead of once per call. See {@link measureDeviation}.
   */
  inputGrid?: TriangleGrid;
}

/** Defaults of {@link decimateMesh} (weights are per attribute component, relative to positions in the simplifier's units). */
export const DECIMATE_DEFAULTS = {
  normalWeight: 0.5,
  colorWeight: 1,
  maxAttempts: 8,
  /** Factor by which each "stop short" attempt raises the budget. */
  stopShortFactor: 1.25,
};

/** One try of the simplifier. */
export interface DecimateAttempt {
  /** Budget asked of the simplifier. */
  targetTriangles: number;
  flags: string[];
  /** Triangles after simplification and repair. */
  triangles: number;
  /** Folded pairs and duplicates removed, degenerate triangles fixed. */
  repaired: { foldedPairs: number; duplicates: number; degenerate: number };
  /** Why it was rejected, or null when it was kept. */
  problem: string | null;
}

/** Result of {@link decimateMesh}. */
export interface DecimateResult {
  /** The decimated mesh, compacted; normals and colors carried from the input. */
  mesh: MeshData;
  /** The budget asked for. */
  targetTriangles: number;
  /** Triangles in `mesh`. */
  triangles: number;
  /** Largest distance between input and output, metres (measured; see the file comment). 0 when unchanged. */
  maxError: number;
  /** The simplifier's own error estimate for the kept attempt (metres, attribute error mixed in). */
  simplifierError: number;
  attempts: DecimateAttempt[];
  /** Why the result differs from what was asked, for the report. */
  warnings: string[];
}

/**
 * Decimates `mesh` to at most `targetTriangles` triangles, keeping it closed and manifold (see the
 * file comment). The input must be indexed (welded), 3 floats per vertex, 3 indices per triangle.
 *
 * @example
 * const { mesh: small, maxError } = await decimateMesh(mesh, { targetTriangles: 20_000 });
 */
export async function decimateMesh(mesh: MeshData, options: DecimateOptions): Promise<DecimateResult> {
  const target = options.targetTriangles;
  if (!Number.isInteger(target) || target < 4) throw new Error(`${NAME}: targetTriangles must be a whole number ≥ 4 (got ${target})`);
  const normalWeight = options.normalWeight ?? DECIMATE_DEFAULTS.normalWeight;
  const colorWeight = options.colorWeight ?? DECIMATE_DEFAULTS.colorWeight;
  const maxAttempts = options.maxAttempts ?? DECIMATE_DEFAULTS.maxAttempts;
  const inputTriangles = mesh.indices.length / 3;
  const unchanged = (warnings: string[], attempts: DecimateAttempt[] = []): DecimateResult => ({
    mesh,
    targetTriangles: target,
    triangles: inputTriangles,
    maxError: 0,
    simplifierError: 0,
    attempts,
    warnings,
  });
  if (inputTriangles <= target) return unchanged([]);

  await MeshoptSimplifier.ready;
  const before = options.inputReport ?? analyzeMesh(mesh);
  const V = mesh.positions.length / 3;
  const weights: number[] = [];
  if (mesh.normals && normalWeight > 0) weights.push(normalWeight, normalWeight, normalWeight);
  if (mesh.colors && colorWeight > 0) weights.push(colorWeight, colorWeight, colorWeight);
  const stride = weights.length;
  let attributes: Float32Array | null = null;
  if (stride > 0) {
    attributes = new Float32Array(V * stride);
    for (let v = 0; v < V; v++) {
      let o = v * stride;
      if (mesh.normals && normalWeight > 0) for (let k = 0; k < 3; k++) attributes[o++] = mesh.normals[3 * v + k];
      if (mesh.colors && colorWeight > 0) for (let k = 0; k < 3; k++) attributes[o++] = mesh.colors[3 * v + k];
    }
  }
  // An error limit the simplifier never reaches: ten times the mesh's extent.
  const errorLimit = 10 * extent(mesh.positions);

  const plan: { target: number; flags: ('ErrorAbsolute' | 'Regularize')[] }[] = [
    { target, flags: ['ErrorAbsolute'] },
    { target, flags: ['ErrorAbsolute', 'Regularize'] },
  ];
  for (let t = target * DECIMATE_DEFAULTS.stopShortFactor; plan.length < maxAttempts && t < inputTriangles; t *= DECIMATE_DEFAULTS.stopShortFactor) {
    plan.push({ target: Math.floor(t), flags: ['ErrorAbsolute'] });
  }
  const attempts: DecimateAttempt[] = [];
  for (const step of plan.slice(0, maxAttempts)) {
    const [raw, simplifierError] = attributes
      ? MeshoptSimplifier.simplifyWithAttributes(mesh.indices, mesh.positions, 3, attributes, stride, weights, null, 3 * step.target, errorLimit, step.flags)
      : MeshoptSimplifier.simplify(mesh.indices, mesh.positions, 3, 3 * step.target, errorLimit, step.flags);
    const dup = removeDuplicateTriangles(raw);
    const compact = compactMesh(mesh, dup.indices).mesh;
    const degen = removeDegenerateTriangles(compact);
    const out = degen.mesh;
    const after = analyzeMesh(out);
    const problem = topologyProblem(before, after);
    const triangles = out.indices.length / 3;
    attempts.push({
      targetTriangles: step.target,
      flags: [...step.flags],
      triangles,
      repaired: { foldedPairs: dup.removed.foldedPairs, duplicates: dup.removed.duplicates, degenerate: degen.removed.found - degen.removed.remaining },
      problem,
    });
    if (problem) continue;
    const warnings: string[] = [];
    if (attempts.length > 1) {
      const why = attempts.slice(0, -1).map((a) => `${a.targetTriangles} triangles${a.flags.includes('Regularize') ? ' (regularized)' : ''}: ${a.problem}`);
      warnings.push(
        step.target > target
          ? `decimation stopped short at ${triangles} triangles (budget ${target}): smaller results broke the mesh (${why.join('; ')})`
          : `decimation needed ${attempts.length} attempts to keep the mesh closed and manifold (${why.join('; ')})`,
      );
    }
    if (triangles > target && step.target <= target) {
      warnings.push(`the simplifier stopped at ${triangles} triangles, above the budget of ${target}, to keep the shape's topology`);
    }
    return {
      mesh: out,
      targetTriangles: target,
      triangles,
      maxError: measureDeviation(mesh, out, options.inputGrid).max,
      simplifierError,
      attempts,
      warnings,
    };
  }
  const why = attempts.map((a) => `${a.targetTriangles}: ${a.problem}`).join('; ');
  return unchanged([`decimation was not applied: every attempt broke the mesh (${why}); the mesh keeps its ${inputTriangles} triangles`], attempts);
}

/** What got worse from `before` to `after`, or null. */
export function topologyProblem(before: MeshReport, after: MeshReport): string | null {
  const worse: string[] = [];
  if (after.triangles === 0) return 'no triangles left';
  if (after.boundaryEdges > before.boundaryEdges) worse.push(`${after.boundaryEdges} boundary edges`);
  if (after.nonManifoldEdges > before.nonManifoldEdges) worse.push(`${after.nonManifoldEdges} non-manifold edges`);
  if (after.inconsistentEdges > before.inconsistentEdges) worse.push(`${after.inconsistentEdges} inconsistently wound edges`);
  if (after.nonManifoldVertices > before.nonManifoldVertices) worse.push(`${after.nonManifoldVertices} non-manifold vertices`);
  if (after.degenerateTriangles > 0) worse.push(`${after.degenerateTriangles} degenerate triangles`);
  if (before.watertight) {
    if (after.components !== before.components) worse.push(`${after.components} components instead of ${before.components}`);
    if (after.genus !== before.genus) worse.push(after.genus === null ? `no genus (not a closed manifold) instead of ${before.genus}` : `genus ${after.genus} instead of ${before.genus}`);
  }
  return worse.length ? worse.join(', ') : null;
}

function extent(p: Float32Array): number {
  const b = positionBounds(p);
  return Math.hypot(b[3] - b[0], b[4] - b[1], b[5] - b[2]) || 1;
}
